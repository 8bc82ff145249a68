// Shared by the reader harnesses: a fuzz input written to a temporary file (the readers
// take paths). A critplex::Error is an expected refusal unless its kind is internal;
// anything else (a crash, a sanitizer report, another exception, an allocation past
// libFuzzer's -malloc_limit_mb) is a finding.
#pragma once

#include <unistd.h>

#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <string>

#include "base/error.hpp"

namespace fuzz_inputs {

inline std::string temp_path(const char* name) {
  static const std::string dir = access("/dev/shm", W_OK) == 0 ? "/dev/shm" : "/tmp";
  return dir + "/critplex-fuzz-" + std::to_string(getpid()) + "-" + name;
}

inline std::string write(const char* name, const std::uint8_t* data, std::size_t size) {
  const std::string path = temp_path(name);
  FILE* f = std::fopen(path.c_str(), "wb");
  if (!f) std::abort();
  if (size) std::fwrite(data, 1, size, f);
  std::fclose(f);
  return path;
}

template <class Body>
void expect_refusal_or_success(Body&& body) {
  try {
    body();
  } catch (const critplex::Error& e) {
    if (e.kind() == critplex::ErrorKind::internal) std::abort();
  }
}

}  // namespace fuzz_inputs
