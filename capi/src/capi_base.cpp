// Versions, errors and strings.
#include <cstdlib>

#include "guard.hpp"
#include "io/files.hpp"

namespace critplex::capi {

namespace {
thread_local std::string last_error;
}

void set_error(const std::string& message) { last_error = message; }
void clear_error() { last_error.clear(); }

char* copy_string(const std::string& text) {
  char* p = static_cast<char*>(std::malloc(text.size() + 1));
  if (p == nullptr) throw std::bad_alloc();
  std::memcpy(p, text.c_str(), text.size() + 1);
  return p;
}

}  // namespace critplex::capi

extern "C" {

const char* cpx_version(void) { return CPX_VERSION_STRING; }
int cpx_abi_version(void) { return CPX_ABI_VERSION; }
const char* cpx_last_error(void) { return critplex::capi::last_error.c_str(); }
void cpx_string_free(char* text) { std::free(text); }
void cpx_remove_partial_files(void) { critplex::io::remove_temporaries_now(); }

const char* cpx_status_name(cpx_status status) {
  switch (status) {
    case CPX_OK: return "CPX_OK";
    case CPX_ERR_ARGUMENT: return "CPX_ERR_ARGUMENT";
    case CPX_ERR_IO: return "CPX_ERR_IO";
    case CPX_ERR_PARSE: return "CPX_ERR_PARSE";
    case CPX_ERR_DATA: return "CPX_ERR_DATA";
    case CPX_ERR_BUDGET: return "CPX_ERR_BUDGET";
    case CPX_ERR_CANCELLED: return "CPX_ERR_CANCELLED";
    case CPX_ERR_OVERFLOW: return "CPX_ERR_OVERFLOW";
    case CPX_ERR_MEMORY: return "CPX_ERR_MEMORY";
    case CPX_ERR_INTERNAL: return "CPX_ERR_INTERNAL";
    case CPX_ERR_BUFFER: return "CPX_ERR_BUFFER";
    case CPX_ERR_MISUSE: return "CPX_ERR_MISUSE";
  }
  return "CPX_ERR_UNKNOWN";
}

}  // extern "C"
