#include "pipeline/study.hpp"

#include <sys/stat.h>

#include <cerrno>
#include <filesystem>
#include <cstring>

#include "base/error.hpp"
#include "connectivity/matrix.hpp"
#include "io/files.hpp"
#include "simulate/cohort_model.hpp"

namespace critplex::pipeline {

std::string series_tsv(const series::Series& s) {
  std::string out;
  for (std::size_t j = 0; j < s.names.size(); ++j) out += (j ? "\t" : "") + s.names[j];
  out += "\n";
  for (Eigen::Index t = 0; t < s.frames(); ++t) {
    for (Eigen::Index j = 0; j < s.regions(); ++j) out += (j ? "\t" : "") + io::format_double(s.values(t, j));
    out += "\n";
  }
  return out;
}

Json demo_analysis_config() {
  return Json::parse(R"({
    "connect": {"method": "pearson", "filter": {"design": "butterworth", "order": 4, "low_hz": 0.01, "high_hz": 0.1}},
    "sweep": {"max_density": 0.4, "grid": 0.01, "homology": {"max_dimension": 2}, "curvature": {}},
    "null": {"model": "rewire", "count": 9, "seed": 7}
  })");
}

Json model_document(const simulate::CohortModel& model, const simulate::CohortPlan& plan) {
  Json subjects = Json::array();
  for (const auto& s : plan.subjects)
    subjects.push_back({{"subject", s.id}, {"group", s.group}, {"global_strength", s.global_strength}, {"age", s.age}});
  return {{"model", simulate::to_json(model)}, {"subjects", subjects},
          {"note", "Invented data from critplex's demo cohort model; no real person is described."}};
}

Json write_simulated_study(const Json& options, const std::string& dir) {
  if (!options.is_object()) fail(ErrorKind::argument, "simulate options must be a JSON object");
  // The layout keys are ours; everything else belongs to the cohort model.
  Json model_options = options;
  std::string layout = "tsv";
  BidsStudyOptions bids;
  bool has_config = false, crossover = false;
  Json config = demo_analysis_config();
  {
    Json own = Json::object();
    for (const char* key : {"config", "layout", "sessions", "block", "design"})
      if (model_options.contains(key)) {
        own[key] = model_options[key];
        model_options.erase(key);
      }
    OptionReader r(own, "simulate options");
    layout = r.choice("layout", "tsv", {"tsv", "bids"});
    crossover = r.choice("design", "two_groups", {"two_groups", "crossover"}) == "crossover";
    if (crossover && layout != "tsv")
      fail(ErrorKind::argument, "simulate options: \"design\": \"crossover\" is written in the tsv layout only");
    if (const Json* c = r.raw("config")) {
      config = *c;
      has_config = true;
    }
    if (layout != "bids" && (r.has("sessions") || r.has("block")))
      fail(ErrorKind::argument, "simulate options: \"sessions\" and \"block\" need \"layout\": \"bids\"");
    const long long sessions = r.integer("sessions", 0);
    if (sessions < 0 || sessions > 99) fail(ErrorKind::argument, "simulate options: \"sessions\" must be in [0, 99]");
    bids.sessions = static_cast<std::size_t>(sessions);
    const long long block = r.integer("block", 2);
    if (block < 1 || block > 8) fail(ErrorKind::argument, "simulate options: \"block\" must be in [1, 8]");
    bids.block = static_cast<int>(block);
    r.finish();
  }
  const auto model = simulate::cohort_model_from_json(model_options, "simulate options");
  if (layout == "bids") {
    // Images carry the repetition time in their header; the demo regresses out the
    // confounds preprocessing pipelines commonly provide (motion and tissue signals).
    if (!has_config) config["connect"]["clean"] = {{"regressor_columns", Json::array({"motion_*", "white_matter", "csf"})}};
    return write_bids_study(model, bids, config, dir);
  }
  if (crossover) return write_crossover_study(model, config, dir);
  const auto plan = simulate::plan_cohort(model);
  // TSV files carry no sampling interval; the config does.
  if (config.is_object() && config.contains("connect") && config["connect"].is_object() &&
      !config["connect"].contains("sampling_interval"))
    config["connect"]["sampling_interval"] = model.sampling_interval;
  io::make_folders(dir);
  io::make_folders(dir + "/timeseries");
  std::string manifest = "subject\tgroup\ttimeseries\tage\n";
  for (std::size_t i = 0; i < plan.subjects.size(); ++i) {
    const auto& s = plan.subjects[i];
    const std::string rel = "timeseries/sub-" + s.id + "_timeseries.tsv";
    io::write_file_atomically(dir + "/" + rel, series_tsv(simulate::simulate_subject(model, plan, i)));
    manifest += s.id + "\t" + s.group + "\t" + rel + "\t" + io::format_double(s.age) + "\n";
  }
  io::write_file_atomically(dir + "/manifest.tsv", manifest);
  io::write_file_atomically(dir + "/cohort_config.json", config.dump(1) + "\n");
  io::write_file_atomically(dir + "/model.json", model_document(model, plan).dump(1) + "\n");
  return {{"layout", "tsv"}, {"subjects", plan.subjects.size()}, {"regions", model.regions}, {"frames", model.frames},
          {"manifest", dir + "/manifest.tsv"}, {"config", dir + "/cohort_config.json"}};
}

}  // namespace critplex::pipeline
