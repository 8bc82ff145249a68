#include "pipeline/provenance.hpp"

#include <Eigen/Core>
#include <filesystem>
#include <limits>

#include "base/error.hpp"
#include "connectivity/connect.hpp"
#include "io/files.hpp"
#include "output/subject.hpp"
#include "pipeline/cohort.hpp"
#include "pipeline/subject.hpp"

namespace critplex::pipeline {

namespace {

// The connect option tables nest: connect.clean, connect.clean.censor, connect.filter.
const OptionSection* sub_section(const OptionSection& section, const std::string& key) {
  if (section.name == "connect" && key == "clean") return &connectivity::clean_option_section();
  if (section.name == "connect" && key == "filter") return &connectivity::filter_option_section();
  if (section.name == "connect.clean" && key == "censor") return &connectivity::censor_option_section();
  return nullptr;
}

Json read_json(const std::string& path) {
  try {
    return Json::parse(io::read_file(path));
  } catch (const Json::exception& e) {
    fail(ErrorKind::parse, "'" + path + "': not valid JSON (" + e.what() + ")");
  }
}

// The resolved subject config (sweep and null with every default), from the config a
// subject document recorded; an explanation when it no longer parses.
Json resolved_subject(const Json& config) {
  try {
    Json c = config;
    const auto resolved = output::resolved_config_json(parse_subject_config(c, ""));
    return resolved;
  } catch (const Error& e) {
    return Json{{"note", std::string("could not resolve the recorded config: ") + e.what()}};
  }
}

double number_or_nan(const Json& j, const char* key) {
  return j.is_object() && j.contains(key) && j[key].is_number() ? j[key].get<double>()
                                                                 : std::numeric_limits<double>::quiet_NaN();
}

// One quality row from a subject document's compared band.
Json quality_row(const Json& doc, const std::string& band) {
  Json row{{"subject", doc.value("subject", "")}, {"session", doc.value("session", "")},
           {"group", doc.value("group", "")}, {"status", "done"}};
  const Json bands = doc.value("bands", Json::array());
  const Json* chosen = nullptr;
  for (const auto& b : bands)
    if (band.empty() || b.value("band", "") == band) {
      chosen = &b;
      break;
    }
  if (!chosen) {
    row["status"] = "no such band";
    return row;
  }
  const Json info = chosen->value("connectivity", Json::object());
  const double frames = number_or_nan(info, "frames"), used = number_or_nan(info, "frames_used");
  row["estimator"] = info.value("method", "");
  row["frames"] = std::isfinite(frames) ? Json(frames) : Json(nullptr);
  row["frames_used"] = std::isfinite(used) ? Json(used) : Json(nullptr);
  row["frames_censored"] = std::isfinite(frames) && std::isfinite(used) ? Json(frames - used) : Json(nullptr);
  row["regions"] = info.value("regions", Json(nullptr));
  row["shrinkage_intensity"] = info.value("shrinkage_intensity", Json(nullptr));
  // A region constant after cleaning stops the subject with an error; none are dropped silently.
  row["regions_dropped"] = info.value("regions_dropped", Json(0));
  const Json null = chosen->value("null", Json());
  if (null.is_object()) {
    row["null_draws"] = null.value("count", Json(nullptr));
    row["null_warning"] = null.value("first_chi_zero", Json::object()).value("warning", Json(nullptr));
  }
  return row;
}

Json versions() {
  return {{"critplex", CRITPLEX_VERSION_STRING},
          {"Eigen", std::to_string(EIGEN_WORLD_VERSION) + "." + std::to_string(EIGEN_MAJOR_VERSION) + "." +
                        std::to_string(EIGEN_MINOR_VERSION)},
          {"nlohmann_json", std::to_string(NLOHMANN_JSON_VERSION_MAJOR) + "." + std::to_string(NLOHMANN_JSON_VERSION_MINOR) +
                                "." + std::to_string(NLOHMANN_JSON_VERSION_PATCH)},
          {"compiler", __VERSION__}};
}

}  // namespace

Json with_defaults(const Json& given, const OptionSection& section) {
  Json out = Json::object();
  for (const auto& k : section.keys) {
    const bool has = given.is_object() && given.contains(k.key);
    if (const OptionSection* sub = sub_section(section, k.key)) {
      if (has && !given[k.key].is_object()) out[k.key] = given[k.key];
      else out[k.key] = with_defaults(has ? given[k.key] : Json::object(), *sub);  // defaults even when absent
      continue;
    }
    if (has) out[k.key] = given[k.key];
    else if (!k.default_value.is_null()) out[k.key] = k.default_value;
  }
  return out;
}

Json cohort_provenance(const std::string& dir, const std::string& band, const Json& compare_given,
                       const Json& compare_resolved) {
  namespace fs = std::filesystem;
  Json p;
  const std::string config_path = dir + "/cohort_config.json";
  const Json cohort_config = fs::exists(config_path) ? read_json(config_path) : Json(nullptr);
  p["config_given"] = {{"cohort_config", cohort_config}, {"compare", compare_given}};
  Json resolved{{"compare", compare_resolved}};
  Json inputs = Json::array(), quality = Json::array(), subject_versions = Json::array();
  std::vector<std::pair<std::string, std::string>> listed;  // subject, session
  if (fs::exists(dir + "/manifest.tsv"))
    for (const auto& row : read_manifest(dir + "/manifest.tsv")) listed.push_back({row.subject, row.session});
  // Failures with their messages, from the cohort run's summary.
  Json failures = Json::object();
  if (fs::exists(dir + "/cohort_summary.json"))
    for (const auto& s : read_json(dir + "/cohort_summary.json").value("subjects", Json::array()))
      if (s.value("status", "") == "failed") failures[s.value("subject", "")] = s.value("message", "");
  for (const auto& [id, session] : listed) {
    const std::string path = dir + "/" + output::subject_prefix(id, session, "") + "_topology.json";
    if (!fs::exists(path)) {
      quality.push_back({{"subject", id}, {"session", session}, {"status", failures.contains(id) ? "failed" : "missing"},
                         {"message", failures.value(id, "no result document")}});
      continue;
    }
    const Json doc = read_json(path);
    quality.push_back(quality_row(doc, band));
    const Json prov = doc.value("provenance", Json::object());
    inputs.push_back({{"subject", id}, {"session", session}, {"inputs", prov.value("inputs", Json::object())}});
    const std::string v = prov.value("critplex_version", "");
    if (std::find(subject_versions.begin(), subject_versions.end(), Json(v)) == subject_versions.end())
      subject_versions.push_back(v);
    if (!resolved.contains("connect")) {
      resolved["connect"] = with_defaults(prov.value("connect_options", Json::object()), connectivity::connect_option_section());
      const Json sweep_null = resolved_subject(prov.value("config", Json::object()));
      for (auto it = sweep_null.begin(); it != sweep_null.end(); ++it) resolved[it.key()] = it.value();
    }
  }
  p["config_resolved"] = std::move(resolved);
  p["versions"] = versions();
  p["versions"]["subject_documents_written_by"] = std::move(subject_versions);
  p["inputs"] = std::move(inputs);
  p["quality"] = std::move(quality);
  return p;
}

}  // namespace critplex::pipeline
