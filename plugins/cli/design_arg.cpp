#include "design_arg.hpp"

#include <cstdio>
#include <fstream>
#include <sstream>

namespace critplex_cli {

std::vector<Flag> design_flags() {
  return {{"design", "FILE|KIND",
           "a study design: a JSON file ({\"design\": ..., \"within\", \"between\", \"score\", \"covariates\", "
           "\"blocks\", \"permutations\", \"seed\"}) or two_groups, paired, groups, regression, mixed; writes "
           "design_tests.tsv and design_tests.json"},
          {"score", "COLUMN", "with --design regression: the manifest column whose slope is tested"},
          {"blocks", "COLUMN", "with --design: manifest column of exchangeability blocks (e.g. site)"}};
}

namespace {

nlohmann::json design_from_argument(const std::string& value) {
  for (const char* kind : {"two_groups", "paired", "groups", "regression", "mixed"})
    if (value == kind) return {{"design", value}};
  if (!path_exists(value))
    throw Failure("--design: '" + value + "' is neither a design (two_groups, paired, groups, regression, mixed) nor a file", 2);
  std::ifstream in(value);
  std::stringstream text;
  text << in.rdbuf();
  try {
    nlohmann::json design = nlohmann::json::parse(text.str());
    if (!design.is_object()) throw Failure("--design: '" + value + "' must hold a JSON object", 2);
    return design;
  } catch (const nlohmann::json::exception& e) {
    throw Failure("--design: '" + value + "' is not valid JSON: " + e.what(), 2);
  }
}

std::string number_text(const nlohmann::json& v, const char* format) {
  if (!v.is_number()) return "n/a";
  char buffer[64];
  std::snprintf(buffer, sizeof buffer, format, v.get<double>());
  return buffer;
}

}  // namespace

void add_design_options(const Args& args, nlohmann::json& options) {
  const auto design = args.value("design");
  if (!design) {
    if (args.has("score") || args.has("blocks")) throw Failure("--score and --blocks need --design", 2);
    return;
  }
  nlohmann::json d = design_from_argument(*design);
  if (auto v = args.value("score")) d["score"] = *v;
  if (auto v = args.value("blocks")) d["blocks"] = *v;
  if (!d.contains("covariates") && options.contains("covariates")) d["covariates"] = options["covariates"];
  if (!d.contains("seed") && options.contains("seed")) d["seed"] = options["seed"];
  if (!d.contains("permutations") && options.contains("resamples")) d["permutations"] = options["resamples"];
  options["design"] = d;
}

void print_design_tests(const nlohmann::json& comparison, const std::string& dir) {
  if (!comparison.contains("design_tests")) return;
  const auto& doc = comparison["design_tests"];
  std::printf("\ndesign: %s\n", doc["design"]["design"].get<std::string>().c_str());
  std::printf("%-40s %-11s %4s %9s %10s %10s %10s %10s %20s\n", "measure", "term", "n", "statistic", "estimate", "effect", "p",
              "p (BH)", "effect name");
  for (const auto& t : doc["tests"]) {
    if (!t.value("tested", false)) {
      std::printf("%-40s %-11s %4s  not tested: %s\n", t["measure"].get<std::string>().c_str(),
                  t.value("term", "").c_str(),
                  std::to_string(t["n"].get<std::size_t>()).c_str(), t.value("note", "").c_str());
      continue;
    }
    const std::string stat = t["statistic"].get<std::string>() + "=" + number_text(t["value"], "%.3g");
    std::printf("%-40s %-11s %4zu %9s %10s %10s %10s %10s %20s\n", t["measure"].get<std::string>().c_str(),
                t.value("term", "").c_str(),
                t["n"].get<std::size_t>(), stat.c_str(), number_text(t["estimate"], "%.4g").c_str(),
                number_text(t["effect_value"], "%.3f").c_str(), number_text(t["p_value"], "%.4g").c_str(),
                number_text(t["p_adjusted"], "%.4g").c_str(), t["effect"].get<std::string>().c_str());
  }
  for (const auto& note : doc.value("notes", nlohmann::json::array())) std::printf("note: %s\n", note.get<std::string>().c_str());
  std::printf("written: %s/design_tests.tsv, %s/design_tests.json\n", dir.c_str(), dir.c_str());
}

}  // namespace critplex_cli
