// critplex options [SECTION]: the reference of every option key, from the parsers' tables.
#include <nlohmann/json.hpp>

#include <cstdio>
#include <string>

#include "cli.hpp"

namespace critplex_cli {
namespace {

std::string schema_text(const char* section) {
  std::size_t needed = 0;
  check(cpx_options_schema(section, nullptr, 0, &needed));
  std::string text(needed, '\0');
  check(cpx_options_schema(section, text.data(), text.size(), &needed));
  text.resize(needed - 1);
  return text;
}

std::string cell(const nlohmann::json& value) {
  if (value.is_null()) return "";
  std::string text = value.is_string() ? value.get<std::string>() : value.dump();
  std::string out;
  for (char c : text) out += (c == '|') ? std::string("\\|") : std::string(1, c);
  return out;
}

// One Markdown section per table: heading, summary, where it is read, then the keys.
std::string markdown(const nlohmann::json& sections) {
  std::string out;
  for (const auto& s : sections) {
    out += "## `" + s["name"].get<std::string>() + "`\n\n" + s["summary"].get<std::string>() + "\n\n";
    out += "Read by: " + s["used_by"].get<std::string>() + ".\n\n";
    out += "| key | type | default | range or choices | meaning |\n|---|---|---|---|---|\n";
    for (const auto& k : s["keys"]) {
      std::string range = k.value("range", "");
      if (k.contains("choices")) {
        for (const auto& c : k["choices"]) range += (range.empty() ? "" : ", ") + c.get<std::string>();
      }
      std::string def = k["default"].is_null() ? "(not set)" : "`" + cell(k["default"]) + "`";
      if (k.contains("default_note")) def += " (" + cell(k["default_note"]) + ")";
      out += "| `" + k["key"].get<std::string>() + "` | " + cell(k["type"]) + " | " + def + " | " + cell(range) +
             " | " + cell(k["meaning"]) + " |\n";
    }
    out += "\n";
  }
  return out;
}

int run_options(const Args& args) {
  const std::string section = args.positional.empty() ? "" : args.positional[0];
  const std::string format = args.value_or("format", "text");
  const auto schema = nlohmann::json::parse(schema_text(section.c_str()));
  if (format == "json") {
    std::printf("%s\n", schema.dump(2).c_str());
  } else if (format == "markdown") {
    std::fputs(markdown(schema).c_str(), stdout);
  } else if (format == "text") {
    for (const auto& s : schema) {
      std::printf("%s: %s\n", s["name"].get<std::string>().c_str(), s["summary"].get<std::string>().c_str());
      for (const auto& k : s["keys"])
        std::printf("  %-22s %-8s default %s\n", k["key"].get<std::string>().c_str(),
                    k["type"].get<std::string>().c_str(), k["default"].dump().c_str());
    }
  } else {
    throw Failure("--format must be text, json or markdown, got '" + format + "'", 2);
  }
  return 0;
}

const Registration registration{Command{
    "options",
    "critplex options [SECTION] [--format text|json|markdown]",
    "List every option key the library reads: type, default, range and meaning.",
    "Printed from the same tables the parsers read. SECTION is a dotted name such as\n"
    "sweep.cliques; without it every section is listed.",
    {{"format", "FORMAT", "text (default), json or markdown"}},
    0,
    1,
    run_options}};

}  // namespace
}  // namespace critplex_cli
