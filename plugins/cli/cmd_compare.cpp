// critplex compare DIR: group statistics from finished subject outputs.
#include <nlohmann/json.hpp>

#include "cli.hpp"
#include "design_arg.hpp"

namespace critplex_cli {
namespace {

// "a,b,,c" -> ["a", "b", "c"]
nlohmann::json name_list(const std::string& v) {
  nlohmann::json list = nlohmann::json::array();
  std::size_t start = 0;
  while (start <= v.size()) {
    auto comma = v.find(',', start);
    std::string name = v.substr(start, comma == std::string::npos ? std::string::npos : comma - start);
    if (!name.empty()) list.push_back(name);
    if (comma == std::string::npos) break;
    start = comma + 1;
  }
  return list;
}

nlohmann::json compare_options(const Args& args) {
  nlohmann::json o = nlohmann::json::object();
  if (auto v = args.value("options")) {
    o = parse_json_input(*v, "--options");
  }
  if (auto v = args.value("band")) o["band"] = *v;
  if (auto v = args.value("covariates")) o["covariates"] = name_list(*v);
  if (auto v = args.value("primary")) o["primary"] = name_list(*v);
  if (args.has("seed")) o["seed"] = args.integer("seed", 1);
  if (args.has("resamples")) o["resamples"] = args.integer("resamples", 9999);
  add_design_options(args, o);
  return o;
}

int run_compare(const Args& args) {
  const std::string dir = args.positional[0];
  char* text = nullptr;
  check(cpx_cohort_compare(dir.c_str(), compare_options(args).dump().c_str(), &text));
  auto doc = nlohmann::json::parse(text);
  cpx_string_free(text);
  // n/a where a value is missing (e.g. Hedges g of two constant groups).
  auto number = [](const nlohmann::json& v, const char* format) {
    if (!v.is_number()) return std::string("n/a");
    char buffer[64];
    std::snprintf(buffer, sizeof buffer, format, v.get<double>());
    return std::string(buffer);
  };
  std::printf("%-52s %-22s %10s %9s %10s %10s\n", "summary", "groups", "difference", "Hedges g", "p", "p (BH)");
  for (const auto& t : doc["tests"]) {
    if (!t.contains("p_value")) continue;
    std::string groups = t["group_a"].get<std::string>() + " vs " + t["group_b"].get<std::string>();
    std::printf("%-52s %-22s %10s %9s %10s %10s\n", t.value("label", t["summary"].get<std::string>()).c_str(),
                groups.c_str(), number(t["value"], "%.4g").c_str(), number(t["hedges_g"], "%.2f").c_str(),
                number(t["p_value"], "%.4g").c_str(), number(t["p_adjusted"], "%.4g").c_str());
  }
  std::printf("written: %s/group_comparison.json, %s/group_tests.tsv\n", dir.c_str(), dir.c_str());
  print_design_tests(doc, dir);
  return 0;
}

std::vector<Flag> compare_flags() {
  std::vector<Flag> flags{
      {"band", "NAME", "which band to compare (default: the first)"},
      {"covariates", "A,B", "manifest columns regressed out of every summary (e.g. age); with --design, its covariates"},
      {"primary", "A,B", "headline summaries, first in the table, with their permutation null drawn (e.g. first_chi_zero)"},
      {"seed", "N", "seed of the Monte Carlo relabellings and bootstrap (default 1)"},
      {"resamples", "N", "Monte Carlo relabellings when exact enumeration is too large (default 9999)"},
      {"options", "JSON", "compare options as a JSON object (docs/options.md: compare)"}};
  for (auto& f : design_flags()) flags.push_back(std::move(f));
  return flags;
}

const Registration registration{Command{
    "compare",
    "critplex compare DIR [options]",
    "Compare groups from the finished subjects of a cohort run.",
    "Reads the subject results in DIR (as written by 'critplex cohort'), then writes\n"
    "group_comparison.json and group_tests.tsv there: group mean curves with bootstrap\n"
    "bands, permutation tests of per-subject summaries (Hedges g, Benjamini-Hochberg),\n"
    "cluster permutation tests along the density axis and the null baselines.",
    compare_flags(),
    1,
    1,
    run_compare}};

}  // namespace
}  // namespace critplex_cli
