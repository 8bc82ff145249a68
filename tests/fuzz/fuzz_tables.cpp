// libFuzzer harness: the table readers (TSV, CSV, whitespace text, NPY) through
// read_series and read_matrix. Byte 0 picks the format (low two bits: tsv, csv, text, npy)
// and whether the header is "auto" or absent (bit 2); the rest is the file. Seeds in
// corpus/tables/.
#include <nlohmann/json.hpp>

#include "fuzz_inputs.hpp"
#include "io/files.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  if (size < 1) return 0;
  static const char* const names[] = {"t.tsv", "t.csv", "t.txt", "t.npy"};
  const std::uint8_t flags = data[0];
  const std::string path = fuzz_inputs::write(names[flags & 3], data + 1, size - 1);
  nlohmann::json options = nlohmann::json::object();
  if (flags & 4) options["header"] = false;
  fuzz_inputs::expect_refusal_or_success([&] { critplex::io::read_series(path, options); });
  fuzz_inputs::expect_refusal_or_success([&] { critplex::io::read_matrix(path, options); });
  std::remove(path.c_str());
  return 0;
}
