// Checks that name the error, not only that there was one: an expression must throw a
// critplex::Error of a given ErrorKind (the kind a C caller sees as its cpx_status), and
// optionally with a message containing a fragment (or matching any Catch string matcher).
//   CHECK_ERROR_KIND(parse_options(j), ErrorKind::argument);
//   CHECK_ERROR_KIND_WITH(parse_options(j), ErrorKind::argument, "max_work");
//   CHECK_ERROR_KIND_WITH(read(f), ErrorKind::parse, Catch::Contains("f.tsv") && Catch::Contains("line 3"));
#pragma once

#include <catch2/catch.hpp>

#include <exception>
#include <string>

#include "base/error.hpp"

namespace critplex::test {

inline std::string error_kind_name(ErrorKind kind) {
  switch (kind) {
    case ErrorKind::argument: return "argument";
    case ErrorKind::io: return "io";
    case ErrorKind::parse: return "parse";
    case ErrorKind::data: return "data";
    case ErrorKind::budget: return "budget";
    case ErrorKind::cancelled: return "cancelled";
    case ErrorKind::overflow: return "overflow";
    case ErrorKind::memory: return "memory";
    case ErrorKind::internal: return "internal";
    case ErrorKind::buffer: return "buffer";
    case ErrorKind::misuse: return "misuse";
  }
  return "unknown kind " + std::to_string(static_cast<int>(kind));
}

// Runs body and says what it threw: the ErrorKind's name, or why there is none. The
// message of what was thrown goes to `message`.
template <class Body>
std::string thrown_kind(Body&& body, std::string& message) {
  try {
    body();
  } catch (const Error& e) {
    message = e.what();
    return error_kind_name(e.kind());
  } catch (const std::exception& e) {
    message = e.what();
    return "not a critplex::Error";
  } catch (...) {
    return "not a critplex::Error";
  }
  return "nothing thrown";
}

// The message check of CHECK_ERROR_KIND_WITH: a fragment the message must contain, or a
// matcher used as it is.
inline Catch::Matchers::StdString::ContainsMatcher message_matcher(const char* fragment) {
  return Catch::Contains(fragment);
}
inline Catch::Matchers::StdString::ContainsMatcher message_matcher(const std::string& fragment) {
  return Catch::Contains(fragment);
}
template <class Matcher>
const Matcher& message_matcher(const Matcher& matcher) {
  return matcher;
}

}  // namespace critplex::test

#define CHECK_ERROR_KIND(expr, kind)                                                                \
  do {                                                                                              \
    std::string cpx_message_;                                                                       \
    const std::string cpx_thrown_ = ::critplex::test::thrown_kind([&] { (void)(expr); }, cpx_message_); \
    INFO("expression: " #expr "\nmessage: " << cpx_message_);                                      \
    CHECK(cpx_thrown_ == ::critplex::test::error_kind_name(kind));                                  \
  } while (false)

#define CHECK_ERROR_KIND_WITH(expr, kind, fragment)                                                 \
  do {                                                                                              \
    std::string cpx_message_;                                                                       \
    const std::string cpx_thrown_ = ::critplex::test::thrown_kind([&] { (void)(expr); }, cpx_message_); \
    INFO("expression: " #expr);                                                                     \
    CHECK(cpx_thrown_ == ::critplex::test::error_kind_name(kind));                                  \
    CHECK_THAT(cpx_message_, ::critplex::test::message_matcher(fragment));                                    \
  } while (false)
