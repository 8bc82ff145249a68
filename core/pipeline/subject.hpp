// One subject end to end: time series (file or image) -> connectivity per band -> sweep
// -> transitions -> null-model comparison, with the inputs' checksums and a fingerprint
// of inputs + options + version, so a result can be traced and a cohort run can skip
// finished work. The config is parsed once, into typed options; core/output writes the
// result.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "base/option_schema.hpp"
#include "connectivity/connect.hpp"
#include "connectivity/matrix.hpp"
#include "pipeline/nulls.hpp"
#include "pipeline/sweep.hpp"

namespace critplex::pipeline {

const OptionSection& subject_option_section();

struct SubjectConfig {
  std::string id;
  std::string session;          // optional (a study with repeated sessions): letters and digits
  std::string group;            // optional, carried into the outputs
  std::string timeseries;       // TSV/CSV/text/NPY path, or
  std::string image, labels, label_names;  // a 4-D NIfTI image with a label atlas
  Json covariates = Json::object();  // e.g. {"age": 31} (numbers or null), carried into the outputs
  Json read_options = Json::object();
  Json connect_given = Json::object();  // the connect options as given, relative paths resolved
  connectivity::ConnectOptions connect;
  SweepOptions sweep;
  NullSpec null;
  Json original = Json::object();  // the config as given, for provenance
};

// Parses and checks a subject config; relative paths are resolved against base_dir
// ("" = as given). Every option is checked here, before any work.
SubjectConfig parse_subject_config(const Json& config, const std::string& base_dir);

struct BandResult {
  std::string band;  // "" when the options name no bands
  connectivity::Matrix matrix;
  SweepResult sweep;
  std::optional<NullResult> null;  // when a null model ran
};

struct SubjectResult {
  SubjectConfig config;
  std::size_t frames = 0, regions = 0;
  double sampling_interval = 0.0;
  std::vector<BandResult> bands;
  Json checksums;           // every input file with its SHA-256
  std::string fingerprint;  // of version + config + inputs
};

// Checksums of the inputs and a fingerprint of inputs + options + version: equal
// fingerprints mean a finished result can be reused.
Json input_checksums(const SubjectConfig& config);
std::string subject_fingerprint(const SubjectConfig& config, const Json& checksums);

SubjectResult run_subject(const SubjectConfig& config, const ProgressFn& progress);

// Writes the subject's outputs into out_dir (core/output names and formats them): every
// file is serialised before the first is written, each is written atomically, and the
// JSON document comes last, so its presence marks a finished subject. Returns the file
// names written (without folder).
std::vector<std::string> write_subject_outputs(const SubjectResult& result, const std::string& out_dir);

}  // namespace critplex::pipeline
