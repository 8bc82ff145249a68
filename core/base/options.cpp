#include "base/options.hpp"

#include <cmath>
#include <set>
#include <vector>

#include "base/option_schema.hpp"

namespace critplex {

namespace {

std::string shortened(const std::string& text, std::size_t limit = 200) {
  if (text.size() <= limit) return text;
  return text.substr(0, limit) + "... (" + std::to_string(text.size()) + " characters)";
}

// Refuses nesting deeper than kMaxJsonDepth, counting brackets outside strings.
void check_json_depth(const std::string& text, const std::string& where, ErrorKind kind) {
  int depth = 0;
  bool in_string = false, escaped = false;
  std::size_t line = 1, column = 0;
  for (char c : text) {
    ++column;
    if (c == '\n') line += 1, column = 0;
    if (in_string) {
      if (escaped) escaped = false;
      else if (c == '\\') escaped = true;
      else if (c == '"') in_string = false;
      continue;
    }
    if (c == '"') in_string = true;
    else if (c == '[' || c == '{') {
      if (++depth > kMaxJsonDepth)
        fail(kind, where + ": JSON nested deeper than " + std::to_string(kMaxJsonDepth) +
                                      " levels at line " + std::to_string(line) + ", column " + std::to_string(column));
    } else if (c == ']' || c == '}') {
      --depth;
    }
  }
}

}  // namespace

Json parse_json_text(const std::string& text, const std::string& where, ErrorKind kind) {
  check_json_depth(text, where, kind);
  // One set of keys per open object; a key seen twice in the same object is refused.
  std::vector<std::set<std::string>> keys;
  auto on_event = [&](int, Json::parse_event_t event, Json& parsed) {
    if (event == Json::parse_event_t::object_start) keys.emplace_back();
    else if (event == Json::parse_event_t::object_end && !keys.empty()) keys.pop_back();
    else if (event == Json::parse_event_t::key && !keys.empty() && !keys.back().insert(parsed.get<std::string>()).second)
      fail(kind, where + ": key " + quoted_value(parsed) + " appears twice in the same JSON object");
    return true;
  };
  try {
    return Json::parse(text, on_event);
  } catch (const Json::parse_error& e) {
    fail(kind, where + ": not valid JSON (" + shortened(e.what()) + ")");
  } catch (const Json::out_of_range& e) {  // a number beyond double's range, e.g. 1e400
    fail(kind, where + ": not usable JSON (" + shortened(e.what()) + ")");
  }
}

Json parse_options(const char* text, const std::string& where) {
  if (text == nullptr) return Json::object();
  std::string s(text);
  if (s.find_first_not_of(" \t\r\n") == std::string::npos) return Json::object();
  Json j = parse_json_text(s, where);
  if (j.is_null()) return Json::object();
  if (!j.is_object()) fail(ErrorKind::argument, where + ": expected a JSON object, got " + std::string(j.type_name()));
  return j;
}

OptionReader::OptionReader(const Json& object, std::string where) : object_(object), where_(std::move(where)) {
  if (!object_.is_object()) fail(ErrorKind::argument, where_ + ": expected a JSON object");
}

bool OptionReader::has(const std::string& key) const { return object_.contains(key) && !object_.at(key).is_null(); }

const Json& OptionReader::value(const std::string& key) {
  used_.insert(key);
  return object_.at(key);
}

void OptionReader::bad(const std::string& key, const std::string& expected) const {
  fail(ErrorKind::argument,
       where_ + ": option \"" + key + "\" must be " + expected + ", got " + quoted_value(object_.at(key)));
}

std::optional<double> OptionReader::number(const std::string& key) {
  if (!object_.contains(key)) return std::nullopt;
  const Json& v = value(key);
  if (v.is_null()) return std::nullopt;
  if (!v.is_number()) bad(key, "a number");
  double d = v.get<double>();
  if (!std::isfinite(d)) bad(key, "a finite number");
  return d;
}

double OptionReader::number(const std::string& key, double fallback) {
  auto v = number(key);
  return v ? *v : fallback;
}

long long OptionReader::integer(const std::string& key, long long fallback) {
  if (!object_.contains(key)) return fallback;
  const Json& v = value(key);
  if (v.is_null()) return fallback;
  if (v.is_number_integer()) return v.get<long long>();
  if (v.is_number_float()) {
    double d = v.get<double>();
    if (std::isfinite(d) && d == std::floor(d) && std::fabs(d) < 9e15) return static_cast<long long>(d);
  }
  bad(key, "an integer");
}

bool OptionReader::boolean(const std::string& key, bool fallback) {
  if (!object_.contains(key)) return fallback;
  const Json& v = value(key);
  if (v.is_null()) return fallback;
  if (!v.is_boolean()) bad(key, "true or false");
  return v.get<bool>();
}

std::string OptionReader::text(const std::string& key, const std::string& fallback) {
  if (!object_.contains(key)) return fallback;
  const Json& v = value(key);
  if (v.is_null()) return fallback;
  if (!v.is_string()) bad(key, "a string");
  return v.get<std::string>();
}

std::string OptionReader::choice(const std::string& key, const std::string& fallback,
                                 const std::vector<std::string>& allowed) {
  std::string s = text(key, fallback);
  for (const auto& a : allowed)
    if (a == s) return s;
  std::string list;
  for (const auto& a : allowed) list += (list.empty() ? "" : ", ") + ("\"" + a + "\"");
  bad(key, "one of " + list);
}

std::vector<double> OptionReader::numbers(const std::string& key) {
  std::vector<double> out;
  if (!object_.contains(key)) return out;
  const Json& v = value(key);
  if (v.is_null()) return out;
  if (v.is_number()) return {v.get<double>()};
  if (!v.is_array()) bad(key, "a list of numbers");
  for (const auto& e : v) {
    if (!e.is_number() || !std::isfinite(e.get<double>())) bad(key, "a list of finite numbers");
    out.push_back(e.get<double>());
  }
  return out;
}

std::vector<std::string> OptionReader::texts(const std::string& key) {
  std::vector<std::string> out;
  if (!object_.contains(key)) return out;
  const Json& v = value(key);
  if (v.is_null()) return out;
  if (v.is_string()) return {v.get<std::string>()};
  if (!v.is_array()) bad(key, "a list of strings");
  for (const auto& e : v) {
    if (!e.is_string()) bad(key, "a list of strings");
    out.push_back(e.get<std::string>());
  }
  return out;
}

const Json* OptionReader::raw(const std::string& key) {
  if (!object_.contains(key)) return nullptr;
  return &value(key);
}

void OptionReader::finish() const {
  std::string unknown;
  for (auto it = object_.begin(); it != object_.end(); ++it)
    if (!used_.count(it.key())) unknown += (unknown.empty() ? "\"" : ", \"") + it.key() + "\"";
  if (!unknown.empty()) fail(ErrorKind::argument, where_ + ": unknown option " + unknown);
}

}  // namespace critplex
