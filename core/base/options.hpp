// Options travel as JSON objects. Readers take what they know and the caller
// finally asks for leftovers: an unknown key is an error, never silently ignored.
#pragma once

#include <nlohmann/json.hpp>

#include <optional>
#include <set>
#include <string>
#include <vector>

#include "base/error.hpp"

namespace critplex {

using Json = nlohmann::json;

// Deepest nesting of arrays and objects accepted in options, configs and other JSON
// text we read (a real config needs fewer than 10 levels). Checked by a scan of the
// brackets before the JSON parser runs, so hostile text cannot exhaust the stack.
inline constexpr int kMaxJsonDepth = 64;

// Parses JSON text after the depth scan; an object holding the same key twice is
// refused naming the key (the parser would otherwise keep one silently). Errors are
// `kind` (argument for options, parse for files), start with `where` and quote at most
// ~200 characters.
Json parse_json_text(const std::string& text, const std::string& where, ErrorKind kind = ErrorKind::argument);

// Parses options text; empty or null text means "no options". `where` names the
// argument in error messages (e.g. "options of cpx_connect").
Json parse_options(const char* text, const std::string& where);

// Reads typed keys out of a JSON object and remembers which were used.
class OptionReader {
 public:
  OptionReader(const Json& object, std::string where);

  bool has(const std::string& key) const;
  double number(const std::string& key, double fallback);
  std::optional<double> number(const std::string& key);
  long long integer(const std::string& key, long long fallback);
  bool boolean(const std::string& key, bool fallback);
  std::string text(const std::string& key, const std::string& fallback);
  // A string that must be one of `allowed`.
  std::string choice(const std::string& key, const std::string& fallback,
                     const std::vector<std::string>& allowed);
  std::vector<double> numbers(const std::string& key);
  std::vector<std::string> texts(const std::string& key);
  // The raw value, for nested objects; marks the key used.
  const Json* raw(const std::string& key);

  // Throws ErrorKind::argument naming every key that was never read.
  void finish() const;
  const std::string& where() const { return where_; }

 private:
  const Json& value(const std::string& key);
  [[noreturn]] void bad(const std::string& key, const std::string& expected) const;

  const Json& object_;
  std::string where_;
  std::set<std::string> used_;
};

}  // namespace critplex
