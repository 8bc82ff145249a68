// The table of every option key: its type, default, range and meaning, written once.
// Parsers read keys only through a SchemaReader bound to their section's table, so a
// key, its default or its range cannot be documented one way and parsed another: the
// reference (docs/options.md, `critplex options`, cpx_options_schema) is printed from
// the same tables.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "base/options.hpp"

namespace critplex {

struct OptionKey {
  std::string key;
  // "boolean", "integer", "number", "string", "choice", "numbers" (a list), "strings",
  // "object"; anything else is free text describing a value of several shapes.
  std::string type;
  Json default_value = nullptr;  // null: no default (an absent key means "not set")
  std::string default_note;      // shown beside the default, e.g. "0 = every core"
  std::vector<std::string> choices;  // for "choice" (and lists of choices)
  std::optional<double> min, max;    // for numbers and integers, inclusive unless open
  bool min_open = false, max_open = false;
  std::string meaning;
};

struct OptionSection {
  std::string name;        // dotted path, e.g. "sweep.cliques"
  std::string where;       // how messages name it, e.g. "sweep options: cliques"
  std::string used_by;     // e.g. "cpx_sweep_run, critplex sweep --options"
  std::string summary;     // one line
  std::vector<OptionKey> keys;

  // The key's entry; ErrorKind::internal when a parser asks for a key its table lacks.
  const OptionKey& entry(const std::string& key) const;
};

// The range of an entry as text, e.g. "(0, 1]", "[1, 12]", ">= 0"; "" when unbounded.
std::string range_text(const OptionKey& entry);

// Reads an options object through its section's table: defaults, choices and ranges
// come from the table, unknown keys are errors (finish), `null` is never taken for a
// default, and every message names the options (`where`) and the key by its dotted
// path within them (e.g. sweep options: "curvature.bins").
class SchemaReader {
 public:
  // `where` defaults to the section's; `prefix` (default: the section's name without its
  // first part, e.g. "curvature" for "sweep.curvature") is put before every key.
  SchemaReader(Json object, const OptionSection& section);
  SchemaReader(Json object, const OptionSection& section, std::string where);
  SchemaReader(Json object, const OptionSection& section, std::string where, std::string prefix);

  bool has(const std::string& key) const;
  bool boolean(const std::string& key);
  long long integer(const std::string& key);
  double number(const std::string& key);
  std::optional<double> optional_number(const std::string& key);  // absent is nothing
  std::string text(const std::string& key);
  std::string choice(const std::string& key);
  std::vector<double> numbers(const std::string& key);
  std::vector<std::string> texts(const std::string& key);
  // Nested objects and values of several shapes: the raw value (nullptr when absent).
  const Json* raw(const std::string& key);
  // ErrorKind::argument naming every key the table does not list.
  void finish() const;

  const std::string& where() const { return where_; }
  // The key's dotted path, e.g. "curvature.bins".
  std::string path(const std::string& key) const;
  // Throws ErrorKind::argument: `where: "path" must be <expected>, got <value>`.
  [[noreturn]] void bad(const std::string& key, const std::string& expected) const;

 private:
  const OptionKey& entry(const std::string& key) const;
  const Json* value(const std::string& key);  // marks the key read; nullptr when absent
  void check_range(const OptionKey& e, double value) const;

  Json object_;
  const OptionSection& section_;
  std::string where_, prefix_;
  std::vector<std::string> read_;
};

// A JSON value as text for messages, cut to at most `limit` characters.
std::string quoted_value(const Json& value, std::size_t limit = 200);

// The tables as one JSON document (for cpx_options_schema and the docs):
// [{"name", "where", "used_by", "summary", "keys": [{"key", "type", "default", ...}]}].
Json schema_json(const std::vector<const OptionSection*>& sections);

}  // namespace critplex
