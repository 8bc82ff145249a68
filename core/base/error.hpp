// Errors of the engine. Every stage throws critplex::Error; the C interface turns
// the kind into a cpx_status and the message into cpx_last_error().
#pragma once

#include <string.h>

#include <stdexcept>
#include <string>

namespace critplex {

// Mirrors cpx_status in capi/include/critplex/critplex.h (same numbers).
enum class ErrorKind : int {
  argument = 1,   // a bad argument or option value
  io = 2,         // a file cannot be opened, read or written
  parse = 3,      // a file or text has the wrong format
  data = 4,       // well-formed input whose values cannot be used (NaN, constant region, ...)
  budget = 5,     // a work or memory budget was exhausted where a partial result is not allowed
  cancelled = 6,  // the progress callback asked to stop
  overflow = 7,   // an exact value does not fit the requested output type
  memory = 8,     // out of memory
  internal = 9,   // a bug: an invariant did not hold
  buffer = 10,    // a caller's buffer is too small (nothing was written)
  misuse = 11,    // a NULL handle, or a call out of order
};

class Error : public std::runtime_error {
 public:
  Error(ErrorKind kind, const std::string& message) : std::runtime_error(message), kind_(kind) {}
  ErrorKind kind() const noexcept { return kind_; }

 private:
  ErrorKind kind_;
};

[[noreturn]] inline void fail(ErrorKind kind, const std::string& message) { throw Error(kind, message); }

// Text of an errno value through the reentrant strerror_r (std::strerror may share one
// buffer between threads).
inline std::string system_error_text(int code) {
  char buffer[256];
#if defined(_GNU_SOURCE)
  return ::strerror_r(code, buffer, sizeof buffer);  // the GNU form returns the text
#else
  return ::strerror_r(code, buffer, sizeof buffer) == 0 ? std::string(buffer) : "error " + std::to_string(code);
#endif
}

}  // namespace critplex
