// libFuzzer harness: options JSON as every C call receives it (parse_options: the nesting
// limit, duplicate keys, numbers beyond double) and then read through typed readers
// (OptionReader with the usual kinds of key, and the table-reading options of
// read_series). Seeds in corpus/options/.
#include <string>

#include "base/options.hpp"
#include "fuzz_inputs.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string text(reinterpret_cast<const char*>(data), size);
  fuzz_inputs::expect_refusal_or_success([&] {
    const critplex::Json options = critplex::parse_options(text.c_str(), "fuzz options");
    critplex::OptionReader r(options, "fuzz options");
    r.number("max_density", 1.0);
    r.integer("seed", 1);
    r.boolean("fisher_z", false);
    r.choice("method", "pearson", {"pearson", "oas"});
    r.numbers("grid");
    r.texts("covariates");
    if (const critplex::Json* nested = r.raw("cliques"); nested != nullptr && nested->is_object()) {
      critplex::OptionReader inner(*nested, "fuzz options: cliques");
      inner.integer("threads", 0);
      inner.finish();
    }
    r.finish();
  });
  return 0;
}
