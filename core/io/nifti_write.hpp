// Writing NIfTI-1 single-file images (.nii, or .nii.gz when the name ends in ".gz"), for
// the invented demo datasets: axis-aligned grids (a diagonal voxel-to-world transform given
// as both qform and sform), 3-D label images and 4-D series. The reader is io/nifti.hpp.
#pragma once

#include <array>
#include <cstdint>
#include <string>
#include <vector>

namespace critplex::io {

// How values are stored: labels as unscaled integers, series as int16 with the header's
// scl_slope/scl_inter (half the size of float32; the quantisation error is at most
// slope / 2), or float32.
enum class NiftiStorage { uint8, int16, int16_scaled, float32 };

struct NiftiImage {
  std::array<std::int64_t, 4> dims{1, 1, 1, 1};  // x, y, z, volumes (1: a 3-D image)
  std::array<double, 3> voxel_mm{1.0, 1.0, 1.0};
  std::array<double, 3> origin_mm{0.0, 0.0, 0.0};  // world position of voxel (0, 0, 0)
  double repetition_time = 0.0;  // seconds between volumes (pixdim[4]); 4-D images only
  int xform_code = 2;            // qform_code = sform_code (2: aligned to an anatomical image)
  NiftiStorage storage = NiftiStorage::float32;
  std::string description;       // the header's descrip (at most 79 characters)
  std::vector<double> values;    // x fastest, then y, z and volume
};

// The bytes of the image as a .nii file (header, 4 empty extension bytes, voxels).
// Errors (ErrorKind::argument): a size that does not match `values`, dimensions beyond
// NIfTI-1's 16-bit fields, non-positive voxel sizes, a non-finite value, or a label that
// does not fit its integer type.
std::string encode_nifti1(const NiftiImage& image);

// Writes the image atomically (temporary file, then rename); gzip-compressed when the path
// ends in ".gz", with no time stamp in the gzip header so the bytes are reproducible.
void write_nifti1(const std::string& path, const NiftiImage& image);

// The gzip encoding (RFC 1952, zlib's deflate, level 6, no time stamp) of `bytes`.
std::string gzip_bytes(const std::string& bytes);

}  // namespace critplex::io
