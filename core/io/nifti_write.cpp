#include "io/nifti_write.hpp"

#include <zlib.h>

#include <algorithm>
#include <bit>
#include <cmath>
#include <cstring>

#include "base/error.hpp"
#include "io/files.hpp"

namespace critplex::io {

namespace {

// NIfTI files written here are little-endian whatever the host, so bytes go out one by one.
template <class T>
void put(std::string& out, std::size_t offset, T value) {
  using Bits = std::conditional_t<sizeof(T) == 2, std::uint16_t, std::conditional_t<sizeof(T) == 4, std::uint32_t, std::uint64_t>>;
  const Bits bits = std::bit_cast<Bits>(value);
  for (std::size_t k = 0; k < sizeof(T); ++k) out[offset + k] = static_cast<char>((bits >> (8 * k)) & 0xff);
}

struct Coding {
  std::int16_t datatype, bitpix;
  float slope = 0.0f, intercept = 0.0f;  // scl_slope 0 means "unscaled" in NIfTI-1
};

Coding choose_coding(const NiftiImage& image) {
  switch (image.storage) {
    case NiftiStorage::uint8: return {2, 8};
    case NiftiStorage::int16: return {4, 16};
    case NiftiStorage::float32: return {16, 32};
    case NiftiStorage::int16_scaled: break;
  }
  // Map the value range onto +-32000 (a margin inside int16), slope and intercept rounded to
  // float32 first because the header stores them so and readers scale with those.
  const auto [lo, hi] = std::minmax_element(image.values.begin(), image.values.end());
  Coding c{4, 16};
  const double low = image.values.empty() ? 0.0 : *lo, high = image.values.empty() ? 0.0 : *hi;
  c.intercept = static_cast<float>((low + high) / 2.0);
  c.slope = high > low ? static_cast<float>((high - low) / 64000.0) : 1.0f;
  return c;
}

std::string field_text(const std::string& text, std::size_t width) {
  std::string s = text.substr(0, width - 1);
  s.resize(width, '\0');
  return s;
}

}  // namespace

std::string encode_nifti1(const NiftiImage& image) {
  std::int64_t count = 1;
  for (int k = 0; k < 4; ++k) {
    if (image.dims[k] < 1 || image.dims[k] > 32767)
      fail(ErrorKind::argument, "NIfTI-1 writer: dimension " + std::to_string(k + 1) + " is " +
                                    std::to_string(image.dims[k]) + ", must be in [1, 32767]");
    count *= image.dims[k];
  }
  if (static_cast<std::int64_t>(image.values.size()) != count)
    fail(ErrorKind::argument, "NIfTI-1 writer: " + std::to_string(image.values.size()) + " values for a grid of " +
                                  std::to_string(count) + " voxels");
  for (double v : image.voxel_mm)
    if (!(v > 0.0 && std::isfinite(v))) fail(ErrorKind::argument, "NIfTI-1 writer: voxel sizes must be positive");
  const bool series = image.dims[3] > 1;
  if (series && !(image.repetition_time > 0.0))
    fail(ErrorKind::argument, "NIfTI-1 writer: a 4-D image needs a positive repetition time");
  for (std::size_t i = 0; i < image.values.size(); ++i)
    if (!std::isfinite(image.values[i]))
      fail(ErrorKind::argument, "NIfTI-1 writer: value " + std::to_string(i) + " is not finite");

  const Coding c = choose_coding(image);
  std::string out(352, '\0');
  put<std::int32_t>(out, 0, 348);                              // sizeof_hdr
  out[38] = 'r';                                               // regular
  put<std::int16_t>(out, 40, static_cast<std::int16_t>(series ? 4 : 3));  // dim[0]
  for (int k = 0; k < 4; ++k) put<std::int16_t>(out, 42 + 2 * k, static_cast<std::int16_t>(image.dims[k]));
  for (int k = 4; k < 7; ++k) put<std::int16_t>(out, 42 + 2 * k, 1);
  put<std::int16_t>(out, 70, c.datatype);
  put<std::int16_t>(out, 72, c.bitpix);
  put<float>(out, 76, 1.0f);                                   // pixdim[0] = qfac
  for (int k = 0; k < 3; ++k) put<float>(out, 80 + 4 * k, static_cast<float>(image.voxel_mm[k]));
  put<float>(out, 92, series ? static_cast<float>(image.repetition_time) : 0.0f);
  put<float>(out, 108, 352.0f);                                // vox_offset
  put<float>(out, 112, c.slope);
  put<float>(out, 116, c.intercept);
  out[123] = static_cast<char>(series ? 2 | 8 : 2);            // xyzt_units: mm, seconds
  out.replace(148, 80, field_text(image.description, 80));
  put<std::int16_t>(out, 252, static_cast<std::int16_t>(image.xform_code));  // qform_code
  put<std::int16_t>(out, 254, static_cast<std::int16_t>(image.xform_code));  // sform_code
  // qform: no rotation (quaternion b = c = d = 0), offsets = origin; sform: the same as rows.
  for (int k = 0; k < 3; ++k) put<float>(out, 268 + 4 * k, static_cast<float>(image.origin_mm[k]));
  for (int r = 0; r < 3; ++r) {
    put<float>(out, 280 + 16 * r + 4 * r, static_cast<float>(image.voxel_mm[r]));
    put<float>(out, 280 + 16 * r + 12, static_cast<float>(image.origin_mm[r]));
  }
  std::memcpy(&out[344], "n+1", 4);                            // magic; extension bytes stay 0

  const std::size_t item = static_cast<std::size_t>(c.bitpix / 8);
  out.resize(352 + image.values.size() * item);
  for (std::size_t i = 0; i < image.values.size(); ++i) {
    const double v = image.values[i];
    const std::size_t at = 352 + i * item;
    auto integer = [&](double lo, double hi) {
      if (v != std::floor(v) || v < lo || v > hi)
        fail(ErrorKind::argument, "NIfTI-1 writer: value " + std::to_string(i) + " (" + format_double(v) +
                                      ") is not an integer in [" + format_double(lo) + ", " + format_double(hi) + "]");
      return v;
    };
    switch (image.storage) {
      case NiftiStorage::uint8: out[at] = static_cast<char>(static_cast<std::uint8_t>(integer(0, 255))); break;
      case NiftiStorage::int16: put<std::int16_t>(out, at, static_cast<std::int16_t>(integer(-32768, 32767))); break;
      case NiftiStorage::int16_scaled: {
        const double raw = std::round((v - static_cast<double>(c.intercept)) / static_cast<double>(c.slope));
        put<std::int16_t>(out, at, static_cast<std::int16_t>(std::clamp(raw, -32767.0, 32767.0)));
        break;
      }
      case NiftiStorage::float32: put<float>(out, at, static_cast<float>(v)); break;
    }
  }
  return out;
}

std::string gzip_bytes(const std::string& bytes) {
  z_stream z{};
  // windowBits 15 + 16: a gzip wrapper; without deflateSetHeader the time stamp is 0.
  if (deflateInit2(&z, 6, Z_DEFLATED, 15 + 16, 8, Z_DEFAULT_STRATEGY) != Z_OK)
    fail(ErrorKind::io, "gzip: cannot initialise zlib's deflate");
  std::string out(deflateBound(&z, static_cast<uLong>(bytes.size())), '\0');
  z.next_in = reinterpret_cast<Bytef*>(const_cast<char*>(bytes.data()));
  z.avail_in = static_cast<uInt>(bytes.size());
  z.next_out = reinterpret_cast<Bytef*>(out.data());
  z.avail_out = static_cast<uInt>(out.size());
  const int status = deflate(&z, Z_FINISH);
  const std::size_t written = out.size() - z.avail_out;
  deflateEnd(&z);
  if (status != Z_STREAM_END) fail(ErrorKind::io, "gzip: deflate did not finish (zlib status " + std::to_string(status) + ")");
  out.resize(written);
  return out;
}

void write_nifti1(const std::string& path, const NiftiImage& image) {
  const bool gz = path.size() > 3 && path.compare(path.size() - 3, 3, ".gz") == 0;
  std::string bytes = encode_nifti1(image);
  if (bytes.size() > 0xffffffffULL) fail(ErrorKind::argument, "'" + path + "': image too large for this writer (4 GiB)");
  write_file_atomically(path, gz ? gzip_bytes(bytes) : bytes);
}

}  // namespace critplex::io
