// libFuzzer harness: CIFTI-2 dense series with dense label files, and parcellated series
// alone, through read_image_series (NIfTI-2 header, CIFTI XML extension, axes, data).
// Seeds in corpus/cifti/ (made by make_image_corpus.py); input layout in image_inputs.hpp.
#include "image_inputs.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  return fuzz_images::read_pair(data, size, "series.dtseries.nii", "labels.dlabel.nii");
}
