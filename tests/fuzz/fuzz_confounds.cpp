// libFuzzer harness: confounds tables and frame masks (load_clean_inputs). The input is
// the confounds TSV; the columns asked for are fixed patterns, the motion column and the
// frame mask come from the same file. Seeds in corpus/confounds/.
#include "fuzz_inputs.hpp"
#include "io/confounds.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string path = fuzz_inputs::write("confounds.tsv", data, size);
  for (const char* missing : {"zero", "column_mean", "error"}) {
    critplex::series::CleanOptions o;
    o.regressor_table = path;
    o.regressor_columns = {"trans_*", "rot_?", "csf"};
    o.regressor_missing = missing;
    o.motion_column = "framewise_displacement";
    fuzz_inputs::expect_refusal_or_success([&] { critplex::io::load_clean_inputs(o); });
  }
  critplex::series::CleanOptions mask;
  mask.frame_mask = path;
  fuzz_inputs::expect_refusal_or_success([&] { critplex::io::load_clean_inputs(mask); });
  std::remove(path.c_str());
  return 0;
}
