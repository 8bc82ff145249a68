// SHA-256 (FIPS 180-4) of bytes and files: input checksums in provenance records and
// the change detection that lets a cohort run skip finished subjects.
#pragma once

#include <string>

namespace critplex::io {

// Lower-case hexadecimal digest.
std::string sha256_hex(const std::string& bytes);
std::string sha256_file(const std::string& path);  // ErrorKind::io naming the path

}  // namespace critplex::io
