// libFuzzer harness: NIfTI-1 and NIfTI-2 4-D images with label images (plain and gzip,
// either byte order) through read_image_series. Seeds in corpus/nifti/ (made by
// make_image_corpus.py); input layout in image_inputs.hpp.
#include "image_inputs.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  return fuzz_images::read_pair(data, size, "image.nii", "labels.nii");
}
