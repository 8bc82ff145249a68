// Names of enumerations as they appear in options and outputs: one table per enum,
// read both ways, so a name and its value are written down once.
#pragma once

#include <cstddef>
#include <string>
#include <vector>

#include "base/error.hpp"

namespace critplex {

template <class Enum>
struct EnumName {
  Enum value;
  const char* name;
};

// The value named `name`; an argument error naming `what` and the allowed names otherwise.
template <class Enum, std::size_t N>
Enum enum_from_name(const EnumName<Enum> (&table)[N], const std::string& name, const std::string& what) {
  for (const auto& entry : table)
    if (name == entry.name) return entry.value;
  std::string allowed;
  for (const auto& entry : table) allowed += std::string(allowed.empty() ? "" : ", ") + "\"" + entry.name + "\"";
  fail(ErrorKind::argument, what + ": unknown name \"" + name + "\" (expected one of " + allowed + ")");
}

template <class Enum, std::size_t N>
const char* enum_name(const EnumName<Enum> (&table)[N], Enum value) {
  for (const auto& entry : table)
    if (entry.value == value) return entry.name;
  fail(ErrorKind::internal, "enumeration value without a name");
}

template <class Enum, std::size_t N>
std::vector<std::string> enum_names(const EnumName<Enum> (&table)[N]) {
  std::vector<std::string> names;
  for (const auto& entry : table) names.emplace_back(entry.name);
  return names;
}

}  // namespace critplex
