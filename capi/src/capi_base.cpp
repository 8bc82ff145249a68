// Versions, errors and strings.
#include <cstdlib>

#include <nlohmann/json.hpp>

#include "guard.hpp"
#include "io/files.hpp"
#include "pipeline/options_catalogue.hpp"

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

void copy_to_buffer(const std::string& text, char* out, std::size_t capacity, std::size_t* needed) {
  require_pointer(needed, "needed");
  *needed = text.size() + 1;
  if (out == nullptr && capacity == 0) return;  // the size query of the two-call shape
  require_pointer(out, "out");
  if (capacity < text.size() + 1)
    fail(ErrorKind::buffer, "argument 'out' holds " + std::to_string(capacity) + " bytes; " +
                                std::to_string(text.size() + 1) + " are needed");
  std::memcpy(out, text.c_str(), text.size() + 1);
}

namespace {

// What the loaded library was built with and which instruction paths it takes here.
std::string build_info_json() {
  nlohmann::json info;
  info["version"] = CPX_VERSION_STRING;
  info["abi"] = CPX_ABI_VERSION;
#if defined(__clang__)
  info["compiler"] = std::string("clang ") + __clang_version__;
#elif defined(__GNUC__)
  info["compiler"] = std::string("gcc ") + __VERSION__;
#else
  info["compiler"] = "unknown";
#endif
  info["cplusplus"] = static_cast<long>(__cplusplus);
#if defined(NDEBUG)
  info["assertions"] = false;
#else
  info["assertions"] = true;
#endif
  nlohmann::json simd = nlohmann::json::array();
#if defined(__x86_64__) || defined(__i386__)
  if (__builtin_cpu_supports("popcnt")) simd.push_back("popcnt");
  if (__builtin_cpu_supports("bmi2")) simd.push_back("bmi2");
#endif
  info["instruction_paths"] = simd;
  info["threads"] = "std::thread; no GPU";
  return info.dump();
}

}  // namespace

}  // namespace critplex::capi

extern "C" {

cpx_status cpx_build_info(char* out, size_t capacity, size_t* needed) {
  return critplex::capi::guard("cpx_build_info", [&] {
    critplex::capi::copy_to_buffer(critplex::capi::build_info_json(), out, capacity, needed);
  });
}

cpx_status cpx_options_schema(const char* section, char* out, size_t capacity, size_t* needed) {
  return critplex::capi::guard("cpx_options_schema", [&] {
    const std::string name = section == nullptr ? "" : section;
    critplex::capi::copy_to_buffer(critplex::pipeline::options_schema(name).dump(), out, capacity, needed);
  });
}

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
