// One subject end to end: time series (file or image) -> connectivity per band -> sweep
// -> transitions -> null-model comparison, with provenance (version, every option, input
// checksums, seed) so a result can be traced and a cohort run can skip finished work.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "base/options.hpp"
#include "connectivity/matrix.hpp"
#include "pipeline/sweep.hpp"

namespace critplex::pipeline {

// The null model a subject's transitions are read against (README, "Subject config").
struct NullSpec {
  std::string model = "none";  // none, phase_multivariate, phase_independent, iaaft, rewire
  int count = 19;              // surrogates or rewirings
  std::uint64_t seed = 1;
  int iaaft_iterations = 100;
  double rewire_swaps_per_edge = 10.0;
};

struct SubjectConfig {
  std::string id;
  std::string group;            // optional, carried into the outputs
  std::string timeseries;       // TSV/CSV/text/NPY path, or
  std::string image, labels, label_names;  // a 4-D NIfTI image with a label atlas
  std::string confounds;        // optional confounds table (sets connect.clean.regressor_table)
  Json covariates = Json::object();  // e.g. {"age": 31}, carried into the outputs
  Json read_options = Json::object();
  Json connect_options = Json::object();
  Json sweep_options = Json::object();
  NullSpec null;
  Json original = Json::object();  // the config as given, for provenance
};

// Parses a subject config; relative paths are resolved against base_dir ("" = as given).
SubjectConfig parse_subject_config(const Json& config, const std::string& base_dir);

struct BandResult {
  std::string band;  // "" when the options name no bands
  connectivity::Matrix matrix;
  SweepResult sweep;
  Json null = nullptr;  // the null-model section (null when model = none)
};

struct SubjectResult {
  SubjectConfig config;
  std::size_t frames = 0, regions = 0;
  double sampling_interval = 0.0;
  std::vector<BandResult> bands;
  Json provenance;
};

// Checksums of the inputs and a fingerprint of inputs + options + version: equal
// fingerprints mean a finished result can be reused.
Json input_checksums(const SubjectConfig& config);
std::string subject_fingerprint(const SubjectConfig& config, const Json& checksums);

SubjectResult run_subject(const SubjectConfig& config, const ProgressFn& progress);

// The subject document (README, "Subject outputs").
Json subject_document(const SubjectResult& result);

// Writes sub-<id>_topology.json and, per band, the connectivity matrix, curves and
// transitions as TSV, each atomically; returns the file names written (without folder).
std::vector<std::string> write_subject_outputs(const SubjectResult& result, const std::string& out_dir);

// File name prefix of a subject's outputs: "sub-<id>" (+ "_band-<name>").
std::string subject_prefix(const std::string& id, const std::string& band);

}  // namespace critplex::pipeline
