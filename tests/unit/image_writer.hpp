// Writes small NIfTI-1, NIfTI-2 and CIFTI-2 files byte by byte for the image tests, so that
// headers can be made wrong on purpose. The checks against files from another writer are
// in tests/reference/test_images_nibabel.py.
#pragma once

#include <zlib.h>

#include <algorithm>
#include <cstdint>
#include <cstring>
#include <fstream>
#include <string>
#include <vector>

namespace image_writer {

struct Image {
  int version = 1;                  // 1 or 2
  std::vector<std::int64_t> dims;   // dim[1..]
  int datatype = 16;                // float32
  int bitpix = -1;                  // -1: from the datatype
  std::vector<double> pixdim = {1, 2, 2, 2, 0.5};  // pixdim[0..]
  int xyzt_units = 2 | 8;           // mm, seconds
  double vox_offset = -1;           // -1: right after the header and extensions (NaN is written as is)
  double slope = 0, intercept = 0;
  int intent_code = 0;
  bool swap = false;                // write big-endian on this little-endian machine
  std::vector<std::pair<std::int32_t, std::string>> extensions;  // code, content
  std::int32_t esize_override = 0;  // when non-zero, the first extension's declared size
  std::string data;                 // stored values, already encoded

  template <class T>
  void put(std::string& b, std::size_t at, T v) const {
    unsigned char raw[sizeof(T)];
    std::memcpy(raw, &v, sizeof(T));
    if (swap) std::reverse(raw, raw + sizeof(T));
    std::memcpy(&b[at], raw, sizeof(T));
  }

  template <class T>
  void add_values(const std::vector<double>& values) {
    for (double x : values) {
      T v = static_cast<T>(x);
      unsigned char raw[sizeof(T)];
      std::memcpy(raw, &v, sizeof(T));
      if (swap) std::reverse(raw, raw + sizeof(T));
      data.append(reinterpret_cast<const char*>(raw), sizeof(T));
    }
  }

  static int bits(int datatype) {
    switch (datatype) {
      case 2: case 256: return 8;
      case 4: case 512: return 16;
      case 8: case 768: case 16: return 32;
      default: return 64;
    }
  }

  std::string bytes() const {
    const std::size_t header = version == 1 ? 348 : 540;
    std::string ext;
    for (std::size_t k = 0; k < extensions.size(); ++k) {
      std::string content = extensions[k].second;
      content.append((16 - (content.size() + 8) % 16) % 16, '\0');
      std::string e(8, '\0');
      put<std::int32_t>(e, 0, k == 0 && esize_override ? esize_override : static_cast<std::int32_t>(content.size() + 8));
      put<std::int32_t>(e, 4, extensions[k].first);
      ext += e + content;
    }
    const double offset = vox_offset >= 0 || vox_offset != vox_offset ? vox_offset : static_cast<double>(header + 4 + ext.size());
    std::string b(header, '\0');
    const int bp = bitpix >= 0 ? bitpix : bits(datatype);
    if (version == 1) {
      put<std::int32_t>(b, 0, 348);
      put<std::int16_t>(b, 40, static_cast<std::int16_t>(dims.size()));
      for (std::size_t k = 0; k < dims.size(); ++k) put<std::int16_t>(b, 42 + 2 * k, static_cast<std::int16_t>(dims[k]));
      put<std::int16_t>(b, 68, static_cast<std::int16_t>(intent_code));
      put<std::int16_t>(b, 70, static_cast<std::int16_t>(datatype));
      put<std::int16_t>(b, 72, static_cast<std::int16_t>(bp));
      for (std::size_t k = 0; k < pixdim.size(); ++k) put<float>(b, 76 + 4 * k, static_cast<float>(pixdim[k]));
      put<float>(b, 108, static_cast<float>(offset));
      put<float>(b, 112, static_cast<float>(slope));
      put<float>(b, 116, static_cast<float>(intercept));
      b[123] = static_cast<char>(xyzt_units);
      std::memcpy(&b[344], "n+1", 4);
    } else {
      put<std::int32_t>(b, 0, 540);
      std::memcpy(&b[4], "n+2\0\r\n\032\n", 8);
      put<std::int16_t>(b, 12, static_cast<std::int16_t>(datatype));
      put<std::int16_t>(b, 14, static_cast<std::int16_t>(bp));
      put<std::int64_t>(b, 16, static_cast<std::int64_t>(dims.size()));
      for (std::size_t k = 0; k < dims.size(); ++k) put<std::int64_t>(b, 24 + 8 * k, dims[k]);
      for (std::size_t k = 0; k < pixdim.size(); ++k) put<double>(b, 104 + 8 * k, pixdim[k]);
      put<std::int64_t>(b, 168, static_cast<std::int64_t>(offset));
      put<double>(b, 176, slope);
      put<double>(b, 184, intercept);
      put<std::int32_t>(b, 500, xyzt_units);
      put<std::int32_t>(b, 504, intent_code);
    }
    std::string flag(4, '\0');
    if (!extensions.empty()) flag[0] = 1;
    std::string out = b + flag + ext;
    if (static_cast<double>(out.size()) < offset && offset < 1e6) out.append(static_cast<std::size_t>(offset) - out.size(), '\0');
    return out + data;
  }
};

inline void write_plain(const std::string& path, const std::string& bytes) {
  std::ofstream(path, std::ios::binary) << bytes;
}

inline void write_gzip(const std::string& path, const std::string& bytes) {
  gzFile f = gzopen(path.c_str(), "wb");
  gzwrite(f, bytes.data(), static_cast<unsigned>(bytes.size()));
  gzclose(f);
}

// A CIFTI-2 file: NIfTI-2 with the XML in an extension of code 32 and the matrix in dim[5], dim[6].
inline Image cifti(const std::string& xml, std::int64_t rows, std::int64_t columns, const std::vector<double>& values_dim0_fastest) {
  Image img;
  img.version = 2;
  img.dims = {1, 1, 1, 1, rows, columns};
  img.pixdim = {1, 1, 1, 1, 1, 1, 1, 1};
  img.xyzt_units = 0;
  img.intent_code = 3000;
  img.extensions = {{32, xml}};
  img.add_values<float>(values_dim0_fastest);
  return img;
}

}  // namespace image_writer
