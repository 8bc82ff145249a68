// Shared by fuzz_nifti.cpp and fuzz_cifti.cpp: one fuzz input holds an image and its label
// file, which are written to temporary files (the readers take paths) and read with
// read_image_series under a 64 MiB memory budget.
//
// Input layout: byte 0 = flags (bit 0: gzip the first file, bit 1: gzip the second, bit 2:
// no second file, bit 3: the first file is the labels), bytes 1-4 = length of the first file
// (little-endian, clipped to what is left), then the first file, then the second.
// A critplex::Error is an expected refusal unless its kind is internal; anything else (a
// crash, a sanitizer report, another exception, an allocation past libFuzzer's
// -malloc_limit_mb) is a finding.
#pragma once

#include <unistd.h>
#include <zlib.h>

#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <string>

#include "base/error.hpp"
#include "io/nifti.hpp"

namespace fuzz_images {

inline std::string temp_path(const char* name) {
  static const std::string dir = access("/dev/shm", W_OK) == 0 ? "/dev/shm" : "/tmp";
  return dir + "/critplex-fuzz-" + std::to_string(getpid()) + "-" + name;
}

inline void write(const std::string& path, const std::uint8_t* data, std::size_t size, bool compress) {
  if (compress) {
    gzFile f = gzopen(path.c_str(), "wb1");
    if (!f) std::abort();
    if (size) gzwrite(f, data, static_cast<unsigned>(size));
    gzclose(f);
    return;
  }
  FILE* f = std::fopen(path.c_str(), "wb");
  if (!f) std::abort();
  if (size) std::fwrite(data, 1, size, f);
  std::fclose(f);
}

inline int read_pair(const std::uint8_t* data, std::size_t size, const char* first_name, const char* second_name) {
  if (size < 5) return 0;
  const std::uint8_t flags = data[0];
  std::size_t first = static_cast<std::size_t>(data[1]) | static_cast<std::size_t>(data[2]) << 8 |
                      static_cast<std::size_t>(data[3]) << 16 | static_cast<std::size_t>(data[4]) << 24;
  data += 5;
  size -= 5;
  if (first > size) first = size;
  const std::string a = temp_path(first_name), b = temp_path(second_name);
  write(a, data, first, flags & 1);
  const bool pair = !(flags & 4);
  if (pair) write(b, data + first, size - first, flags & 2);
  critplex::io::ImageOptions options;
  options.memory_budget = std::uint64_t{64} << 20;
  try {
    const bool labels_first = flags & 8;
    critplex::io::read_image_series(pair && labels_first ? b : a, pair ? (labels_first ? a : b) : std::string(), options);
  } catch (const critplex::Error& e) {
    if (e.kind() == critplex::ErrorKind::internal) std::abort();
  }
  std::remove(a.c_str());
  std::remove(b.c_str());
  return 0;
}

}  // namespace fuzz_images
