// critplex compare DIR: group statistics from finished subject outputs.
#include <nlohmann/json.hpp>

#include "cli.hpp"

namespace critplex_cli {
namespace {

nlohmann::json compare_options(const Args& args) {
  nlohmann::json o = nlohmann::json::object();
  if (auto v = args.value("options")) {
    o = parse_json_input(*v, "--options");
  }
  if (auto v = args.value("band")) o["band"] = *v;
  if (auto v = args.value("covariates")) {
    nlohmann::json list = nlohmann::json::array();
    std::size_t start = 0;
    while (start <= v->size()) {
      auto comma = v->find(',', start);
      std::string name = v->substr(start, comma == std::string::npos ? std::string::npos : comma - start);
      if (!name.empty()) list.push_back(name);
      if (comma == std::string::npos) break;
      start = comma + 1;
    }
    o["covariates"] = list;
  }
  if (args.has("seed")) o["seed"] = args.integer("seed", 1);
  if (args.has("resamples")) o["resamples"] = args.integer("resamples", 9999);
  return o;
}

int run_compare(const Args& args) {
  const std::string dir = args.positional[0];
  char* text = nullptr;
  check(cpx_cohort_compare(dir.c_str(), compare_options(args).dump().c_str(), &text));
  auto doc = nlohmann::json::parse(text);
  cpx_string_free(text);
  std::printf("%-52s %-22s %10s %9s %10s %10s\n", "summary", "groups", "difference", "Hedges g", "p", "p (BH)");
  for (const auto& t : doc["tests"]) {
    if (!t.contains("p_value")) continue;
    std::string groups = t["group_a"].get<std::string>() + " vs " + t["group_b"].get<std::string>();
    std::printf("%-52s %-22s %10.4g %9.2f %10.4g %10.4g\n", t.value("label", t["summary"].get<std::string>()).c_str(), groups.c_str(),
                t["value"].get<double>(), t["hedges_g"].get<double>(), t["p_value"].get<double>(),
                t["p_adjusted"].get<double>());
  }
  std::printf("written: %s/group_comparison.json, %s/group_tests.tsv\n", dir.c_str(), dir.c_str());
  return 0;
}

const Registration registration{Command{
    "compare",
    "critplex compare DIR [options]",
    "Compare groups from the finished subjects of a cohort run.",
    "Reads the subject results in DIR (as written by 'critplex cohort'), then writes\n"
    "group_comparison.json and group_tests.tsv there: group mean curves with bootstrap\n"
    "bands, permutation tests of per-subject summaries (Hedges g, Benjamini-Hochberg),\n"
    "cluster permutation tests along the density axis and the null baselines.",
    {{"band", "NAME", "which band to compare (default: the first)"},
     {"covariates", "A,B", "manifest columns regressed out of every summary (e.g. age)"},
     {"seed", "N", "seed of the Monte Carlo relabellings and bootstrap (default 1)"},
     {"resamples", "N", "Monte Carlo relabellings when exact enumeration is too large (default 9999)"},
     {"options", "JSON", "compare options as a JSON object (README: compare options)"}},
    1,
    1,
    run_compare}};

}  // namespace
}  // namespace critplex_cli
