// The boundary between C callers and the C++ core: argument checks, exception to
// status translation, the thread-local error message and library-owned strings.
#pragma once

#include <critplex/critplex.h>

#include <atomic>
#include <cstring>
#include <exception>
#include <memory>
#include <new>
#include <string>

#include "base/error.hpp"

namespace critplex::capi {

void set_error(const std::string& message);
void clear_error();

// Runs `body`; any exception becomes a status and a message. Nothing escapes.
template <class Body>
cpx_status guard(const char* function, Body&& body) noexcept {
  try {
    clear_error();
    body();
    return CPX_OK;
  } catch (const Error& e) {
    set_error(std::string(function) + ": " + e.what());
    return static_cast<cpx_status>(static_cast<int>(e.kind()));
  } catch (const std::bad_alloc&) {
    set_error(std::string(function) + ": out of memory");
    return CPX_ERR_MEMORY;
  } catch (const std::exception& e) {
    set_error(std::string(function) + ": internal error: " + e.what());
    return CPX_ERR_INTERNAL;
  } catch (...) {
    set_error(std::string(function) + ": internal error of unknown kind");
    return CPX_ERR_INTERNAL;
  }
}

// Throws an argument error naming `name` when `pointer` is NULL.
inline void require_pointer(const void* pointer, const char* name) {
  if (pointer == nullptr) fail(ErrorKind::argument, std::string("argument '") + name + "' is NULL");
}
inline cpx_layout check_layout(cpx_layout layout) {
  if (layout != CPX_ROW_MAJOR && layout != CPX_COL_MAJOR)
    fail(ErrorKind::argument, "argument 'layout' must be CPX_ROW_MAJOR or CPX_COL_MAJOR, got " +
                                  std::to_string(static_cast<int>(layout)));
  return layout;
}

// A malloc'ed copy, released by cpx_string_free.
char* copy_string(const std::string& text);

// The two-call shape of newer calls: *needed = size with the terminating NUL; out NULL
// with capacity 0 asks only the size; a short buffer is ErrorKind::buffer, untouched.
void copy_to_buffer(const std::string& text, char* out, std::size_t capacity, std::size_t* needed);

// Wraps a C progress callback for the core: returns true when the caller wants to stop.
// The caller's progress callback. Once it has asked to stop, it is never called again
// (the stages may still check for a cancel a few times while they unwind); copies share
// that state, since the stages take the callback by value.
struct Progress {
  Progress(cpx_progress_fn f, void* u) : fn(f), user(u), stopped(std::make_shared<std::atomic<bool>>(false)) {}
  cpx_progress_fn fn = nullptr;
  void* user = nullptr;
  std::shared_ptr<std::atomic<bool>> stopped;
  bool operator()(double fraction) const {
    if (stopped->load()) return true;
    if (fn == nullptr || fn(fraction, user) == 0) return false;
    stopped->store(true);
    return true;
  }
};

}  // namespace critplex::capi
