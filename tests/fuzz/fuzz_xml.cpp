// libFuzzer harness: the XML reader used for CIFTI-2 headers (core/io/xml.hpp) on raw
// text, with its default limits and with tight ones. Seeds in corpus/xml/.
#include <cstdint>
#include <cstdlib>
#include <string_view>

#include "base/error.hpp"
#include "io/xml.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string_view text(reinterpret_cast<const char*>(data), size);
  critplex::io::XmlLimits tight;
  tight.max_depth = 4;
  tight.max_elements = 16;
  tight.max_attributes = 3;
  for (const auto& limits : {critplex::io::XmlLimits{}, tight}) {
    try {
      const auto root = critplex::io::parse_xml(text, "fuzz", limits);
      // Whatever was accepted is valid UTF-8 all the way down.
      if (!critplex::io::is_utf8(root.name) || !critplex::io::is_utf8(root.text)) std::abort();
    } catch (const critplex::Error& e) {
      if (e.kind() != critplex::ErrorKind::parse) std::abort();
    }
  }
  return 0;
}
