#include "base/option_schema.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstdlib>

#include "base/error.hpp"

namespace critplex {

namespace {
std::string number_text(double x) {
  char buffer[32];
  // Whole numbers as integers (100, not 1e+02), as a reader writes them.
  if (x == std::floor(x) && std::fabs(x) < 1e15) {
    std::snprintf(buffer, sizeof buffer, "%.0f", x);
    return buffer;
  }
  std::snprintf(buffer, sizeof buffer, "%.17g", x);
  // The shortest of %.17g's candidates that reads back the same.
  for (int digits = 1; digits <= 17; ++digits) {
    char shorter[32];
    std::snprintf(shorter, sizeof shorter, "%.*g", digits, x);
    if (std::strtod(shorter, nullptr) == x) return shorter;
  }
  return buffer;
}
}  // namespace

const OptionKey& OptionSection::entry(const std::string& key) const {
  for (const auto& e : keys)
    if (e.key == key) return e;
  fail(ErrorKind::internal, "option table \"" + name + "\" has no key \"" + key + "\"");
}

std::string range_text(const OptionKey& e) {
  if (e.min && e.max)
    return (e.min_open ? "(" : "[") + number_text(*e.min) + ", " + number_text(*e.max) + (e.max_open ? ")" : "]");
  if (e.min) return (e.min_open ? "> " : ">= ") + number_text(*e.min);
  if (e.max) return (e.max_open ? "< " : "<= ") + number_text(*e.max);
  return "";
}

std::string quoted_value(const Json& value, std::size_t limit) {
  std::string text = value.dump(-1, ' ', false, Json::error_handler_t::replace);
  if (text.size() > limit) text = text.substr(0, limit) + "... (" + std::to_string(text.size()) + " characters)";
  return text;
}

SchemaReader::SchemaReader(Json object, const OptionSection& section)
    : SchemaReader(std::move(object), section, section.where) {}

SchemaReader::SchemaReader(Json object, const OptionSection& section, std::string where)
    : SchemaReader(std::move(object), section, std::move(where),
                   section.name.find('.') == std::string::npos ? std::string()
                                                               : section.name.substr(section.name.find('.') + 1)) {}

SchemaReader::SchemaReader(Json object, const OptionSection& section, std::string where, std::string prefix)
    : object_(std::move(object)), section_(section), where_(std::move(where)), prefix_(std::move(prefix)) {
  if (object_.is_null()) object_ = Json::object();
  if (!object_.is_object())
    fail(ErrorKind::argument, where_ + ": " + (prefix_.empty() ? std::string("the options") : "\"" + prefix_ + "\"") +
                                  " must be a JSON object, got " + quoted_value(object_));
}

std::string SchemaReader::path(const std::string& key) const { return prefix_.empty() ? key : prefix_ + "." + key; }

void SchemaReader::bad(const std::string& key, const std::string& expected) const {
  const std::string got = object_.contains(key) ? quoted_value(object_.at(key)) : std::string("nothing");
  fail(ErrorKind::argument, where_ + ": \"" + path(key) + "\" must be " + expected + ", got " + got);
}

const OptionKey& SchemaReader::entry(const std::string& key) const { return section_.entry(key); }

const Json* SchemaReader::value(const std::string& key) {
  (void)entry(key);
  if (!object_.contains(key)) return nullptr;
  read_.push_back(key);
  const Json& v = object_.at(key);
  // null is not a way to ask for the default: an absent key is.
  if (v.is_null()) bad(key, "a value (leave the key out for the default)");
  return &v;
}

void SchemaReader::check_range(const OptionKey& e, double v) const {
  const bool low = e.min && (e.min_open ? !(v > *e.min) : !(v >= *e.min));
  const bool high = e.max && (e.max_open ? !(v < *e.max) : !(v <= *e.max));
  if (low || high) bad(e.key, std::string(e.min && e.max ? "in " : "") + range_text(e));
}

bool SchemaReader::has(const std::string& key) const {
  (void)entry(key);
  return object_.contains(key);
}

bool SchemaReader::boolean(const std::string& key) {
  const OptionKey& e = entry(key);
  const Json* v = value(key);
  if (v == nullptr) return e.default_value.is_boolean() && e.default_value.get<bool>();
  if (!v->is_boolean()) bad(key, "true or false");
  return v->get<bool>();
}

long long SchemaReader::integer(const std::string& key) {
  const OptionKey& e = entry(key);
  const Json* v = value(key);
  if (v == nullptr) return e.default_value.is_number() ? e.default_value.get<long long>() : 0;
  long long x = 0;
  if (v->is_number_integer()) {
    x = v->get<long long>();
  } else if (v->is_number_float() && std::isfinite(v->get<double>()) && v->get<double>() == std::floor(v->get<double>()) &&
             std::fabs(v->get<double>()) < 9e15) {
    x = static_cast<long long>(v->get<double>());
  } else {
    bad(key, "an integer" + (range_text(e).empty() ? "" : " in " + range_text(e)));
  }
  check_range(e, static_cast<double>(x));
  return x;
}

double SchemaReader::number(const std::string& key) {
  const OptionKey& e = entry(key);
  const auto v = optional_number(key);
  return v ? *v : (e.default_value.is_number() ? e.default_value.get<double>() : 0.0);
}

std::optional<double> SchemaReader::optional_number(const std::string& key) {
  const OptionKey& e = entry(key);
  const Json* v = value(key);
  if (v == nullptr) return std::nullopt;
  if (!v->is_number() || !std::isfinite(v->get<double>())) bad(key, "a finite number");
  check_range(e, v->get<double>());
  return v->get<double>();
}

std::string SchemaReader::text(const std::string& key) {
  const OptionKey& e = entry(key);
  const Json* v = value(key);
  if (v == nullptr) return e.default_value.is_string() ? e.default_value.get<std::string>() : std::string();
  if (!v->is_string()) bad(key, "a string");
  return v->get<std::string>();
}

namespace {
std::string choice_list(const std::vector<std::string>& choices) {
  std::string list;
  for (const auto& c : choices) list += (list.empty() ? "\"" : ", \"") + c + "\"";
  return list;
}
}  // namespace

std::string SchemaReader::choice(const std::string& key) {
  const OptionKey& e = entry(key);
  const std::string s = text(key);
  if (!object_.contains(key)) return s;
  if (std::find(e.choices.begin(), e.choices.end(), s) == e.choices.end()) bad(key, "one of " + choice_list(e.choices));
  return s;
}

std::vector<double> SchemaReader::numbers(const std::string& key) {
  const OptionKey& e = entry(key);
  const Json* v = value(key);
  if (v == nullptr) return e.default_value.is_array() ? e.default_value.get<std::vector<double>>() : std::vector<double>{};
  std::vector<double> out;
  if (v->is_number()) {
    out.push_back(v->get<double>());
  } else if (v->is_array()) {
    for (const auto& x : *v) {
      if (!x.is_number() || !std::isfinite(x.get<double>())) bad(key, "a list of finite numbers");
      out.push_back(x.get<double>());
    }
  } else {
    bad(key, "a list of numbers");
  }
  for (double x : out) check_range(e, x);
  return out;
}

std::vector<std::string> SchemaReader::texts(const std::string& key) {
  const OptionKey& e = entry(key);
  const Json* v = value(key);
  if (v == nullptr)
    return e.default_value.is_array() ? e.default_value.get<std::vector<std::string>>() : std::vector<std::string>{};
  std::vector<std::string> out;
  if (v->is_string()) {
    out.push_back(v->get<std::string>());
  } else if (v->is_array()) {
    for (const auto& x : *v) {
      if (!x.is_string()) bad(key, "a list of strings");
      out.push_back(x.get<std::string>());
    }
  } else {
    bad(key, "a list of strings");
  }
  if (!e.choices.empty())
    for (const auto& s : out)
      if (std::find(e.choices.begin(), e.choices.end(), s) == e.choices.end())
        bad(key, "a list of " + choice_list(e.choices));
  return out;
}

const Json* SchemaReader::raw(const std::string& key) { return value(key); }

void SchemaReader::finish() const {
  std::string unknown;
  for (auto it = object_.begin(); it != object_.end(); ++it) {
    bool known = false;
    for (const auto& e : section_.keys) known = known || e.key == it.key();
    if (!known) unknown += (unknown.empty() ? "\"" : ", \"") + path(it.key()) + "\"";
  }
  if (!unknown.empty()) {
    std::string allowed;
    for (const auto& e : section_.keys) allowed += (allowed.empty() ? "" : ", ") + e.key;
    fail(ErrorKind::argument, where_ + ": unknown option " + unknown + " (known here: " + allowed + ")");
  }
}

Json schema_json(const std::vector<const OptionSection*>& sections) {
  Json out = Json::array();
  for (const OptionSection* s : sections) {
    Json keys = Json::array();
    for (const OptionKey& e : s->keys) {
      Json k{{"key", e.key}, {"type", e.type}, {"default", e.default_value}, {"meaning", e.meaning}};
      if (!e.default_note.empty()) k["default_note"] = e.default_note;
      if (!e.choices.empty()) k["choices"] = e.choices;
      const std::string range = range_text(e);
      if (!range.empty()) k["range"] = range;
      keys.push_back(std::move(k));
    }
    out.push_back(Json{{"name", s->name}, {"where", s->where}, {"used_by", s->used_by}, {"summary", s->summary},
                       {"keys", std::move(keys)}});
  }
  return out;
}

}  // namespace critplex
