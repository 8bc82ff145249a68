#include "base/options.hpp"

#include <cmath>

namespace critplex {

Json parse_options(const char* text, const std::string& where) {
  if (text == nullptr) return Json::object();
  std::string s(text);
  if (s.find_first_not_of(" \t\r\n") == std::string::npos) return Json::object();
  Json j;
  try {
    j = Json::parse(s);
  } catch (const Json::parse_error& e) {
    fail(ErrorKind::argument, where + ": not valid JSON (" + e.what() + ")");
  }
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
       where_ + ": option \"" + key + "\" must be " + expected + ", got " + object_.at(key).dump());
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
