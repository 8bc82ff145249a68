// critplex simulate --out DIR [--layout bids]: a synthetic cohort (invented data) with chosen
// group effects, as time series tables or as a preprocessing pipeline's derivatives.
#include <nlohmann/json.hpp>

#include "cli.hpp"

namespace critplex_cli {
namespace {

int run_simulate(const Args& args) {
  const auto out = args.value("out");
  if (!out) throw Failure("--out DIR is required", 2);
  nlohmann::json options = nlohmann::json::object();
  if (auto v = args.value("options")) {
    options = parse_json_input(*v, "--options");
  }
  if (args.has("regions")) options["regions"] = args.integer("regions", 90);
  if (args.has("frames")) options["frames"] = args.integer("frames", 600);
  if (args.has("seed")) options["seed"] = args.integer("seed", 1);
  if (args.has("sampling-interval")) options["sampling_interval"] = args.number("sampling-interval", 0.8);
  if (auto v = args.value("layout")) {
    if (*v != "tsv" && *v != "bids") throw Failure("--layout: expected tsv or bids, got '" + *v + "'", 2);
    options["layout"] = *v;
  }
  if (args.has("sessions")) options["sessions"] = args.integer("sessions", 0);
  if (args.has("block")) options["block"] = args.integer("block", 2);
  if (auto v = args.value("design")) options["design"] = *v;
  if (args.has("subjects") || args.has("effect")) {
    const long long n = args.integer("subjects", 20);
    const double effect = args.number("effect", 0.25);
    options["groups"] = nlohmann::json::array({{{"name", "rested"}, {"subjects", n}, {"global_mean", 0.25}, {"global_sd", 0.08}},
                                               {{"name", "deprived"}, {"subjects", n}, {"global_mean", 0.25 + effect},
                                                {"global_sd", 0.08}}});
  }
  char* summary = nullptr;
  check(cpx_simulate_study(options.dump().c_str(), out->c_str(), &summary));
  auto s = nlohmann::json::parse(summary);
  cpx_string_free(summary);
  std::printf("simulated %d subjects (%d regions, %d frames) in %s\n", s["subjects"].get<int>(), s["regions"].get<int>(),
              s["frames"].get<int>(), out->c_str());
  if (s["layout"] == "bids")
    std::printf("derivatives: %s\natlas: %s (labels %s)\n", s["derivatives"].get<std::string>().c_str(),
                s["atlas"].get<std::string>().c_str(), s["atlas_labels"].get<std::string>().c_str());
  std::printf("next: critplex cohort %s --config %s --out RESULTS\n", s["manifest"].get<std::string>().c_str(),
              s["config"].get<std::string>().c_str());
  if (s["layout"] == "bids")
    std::printf("  or: critplex dataset %s RESULTS participant --atlas %s --atlas-labels %s --config %s\n"
                "      critplex dataset %s RESULTS group\n",
                s["derivatives"].get<std::string>().c_str(), s["atlas"].get<std::string>().c_str(),
                s["atlas_labels"].get<std::string>().c_str(), s["config"].get<std::string>().c_str(),
                s["derivatives"].get<std::string>().c_str());
  return 0;
}

const Registration registration{Command{
    "simulate",
    "critplex simulate --out DIR [options]",
    "Write a synthetic two-group cohort (invented data) for power analysis and the demo.",
    "The model (docs/demo-study.md) is a fictional sleep laboratory: rested and\n"
    "sleep-deprived volunteers whose modular regional signals share a global signal that\n"
    "is stronger in the deprived group. Writes time series, manifest.tsv,\n"
    "cohort_config.json and model.json into DIR. With --layout bids, DIR (new or empty)\n"
    "becomes a BIDS dataset whose derivatives/critplex-simulate/ holds 4-D NIfTI-1 runs,\n"
    "an atlas with its label table, confounds tables and JSON sidecars, and DIR holds a\n"
    "manifest of image and atlas rows for critplex cohort.",
    {{"out", "DIR", "output folder (required; created if missing)"},
     {"subjects", "N", "subjects per group (default 20)"},
     {"effect", "X", "how much stronger the deprived group's global signal is (default 0.25)"},
     {"regions", "N", "regions (default 90)"},
     {"frames", "T", "time points (default 600)"},
     {"sampling-interval", "S", "seconds between time points (default 0.8)"},
     {"seed", "N", "study seed (default 1)"},
     {"layout", "KIND", "tsv (time series tables, default) or bids (images as pipeline derivatives)"},
     {"sessions", "N", "bids: sessions per subject (default 0: no session level)"},
     {"block", "N", "bids: voxels along each side of a region's cube, 1-8 (default 2)"},
     {"design", "KIND", "two_groups (default) or crossover: the same volunteers rested and after a night without "
                        "sleep (sessions rested and deprived, a sleepiness rating per session; --subjects volunteers)"},
     {"options", "JSON", "model options as a JSON object (docs/options.md)"}},
    0,
    0,
    run_simulate}};

}  // namespace
}  // namespace critplex_cli
