// Group comparison of finished subjects: group mean curves with bootstrap bands,
// permutation tests of per-subject summaries (Hedges g, Benjamini-Hochberg across the
// table, covariates regressed out when asked), a cluster-based permutation test along
// the density axis, and the null baselines. Every statistic comes from core/cohort;
// core/output writes the result and the report is built from it.
#pragma once

#include <cstdint>
#include <map>
#include <optional>
#include <string>
#include <vector>

#include "base/option_schema.hpp"
#include "cohort/designs.hpp"
#include "cohort/statistics.hpp"
#include "output/subject_record.hpp"

namespace critplex::pipeline {

struct CompareOptions {
  std::string band;                  // "" = each subject's first band
  std::vector<std::string> groups;   // order; empty = order of first appearance
  std::string statistic = "mean_difference";
  std::uint64_t exact_limit = 20000, resamples = 9999, seed = 1;
  double confidence = 0.95;
  std::vector<std::string> covariates;     // regressed out of every summary before testing
  std::vector<std::string> cluster_curves{"chi"};
  std::vector<std::string> primary;  // headline summaries, listed first in the table (empty: the first summary)
  Json given = Json::object();       // the options as given (provenance)
  std::optional<cohort::DesignSpec> design;  // the "design" section: tests written to design_tests.tsv/json
};
const OptionSection& compare_option_section();
CompareOptions parse_compare_options(const Json& options);

// A group's curves and per-subject values.
struct GroupResult {
  std::string name;
  std::vector<std::string> subjects;
  std::vector<std::string> sessions;  // per subject ("" when the manifest names none)
  std::map<std::string, cohort::Band> curves;  // chi, betti_k, kappa_mean, kappa_sd, forman_mean (complete ones)
  std::map<std::string, std::vector<double>> summaries;  // per subject, NaN where missing
  std::vector<double> curvature_at_transition;  // node curvatures at each subject's first chi zero, pooled
  std::vector<std::vector<double>> subject_chi;  // each subject's chi on the grid (NaN: missing), for the report
};

// One permutation test of a summary between two groups: group a (a later group) minus
// group b (the first). row.p_adjusted is Benjamini-Hochberg across the whole table.
struct NullHistogram {
  std::vector<double> edges;           // bins + 1 edges
  std::vector<std::uint64_t> counts;   // relabelled statistics per bin
};

struct SummaryTest {
  std::string group_a, group_b;
  std::vector<std::string> covariates;  // regressed out (empty: none)
  cohort::SummaryTestRow row;
  bool headline = false;                 // a primary summary: its null distribution is kept
  std::optional<NullHistogram> null_histogram;
};

// Histogram of a permutation null (equal-width bins spanning the draws and the observed value).
NullHistogram null_histogram(const std::vector<double>& null_statistics, double observed, std::size_t bins = 30);

struct ClusterTest {
  std::string curve, group_a, group_b;
  std::vector<double> density;  // the grid points tested (where every subject has a value and the groups vary)
  std::optional<cohort::ClusterResult> result;
  std::string note;
};

struct NullBaseline {
  std::string label;
  std::vector<double> density, chi;
};

struct Comparison {
  CompareOptions options;
  std::size_t regions = 0;
  std::vector<double> density;  // the grid as requested
  std::vector<GroupResult> groups;
  std::vector<SummaryTest> tests;
  std::vector<ClusterTest> clusters;
  std::optional<NullBaseline> null_baseline;
  std::vector<std::string> missing;  // listed subjects without a finished result
  std::vector<std::string> warnings;  // e.g. too few null draws for a z-score
  Json provenance;  // config given and resolved, versions, checksums, quality (pipeline/provenance.hpp); null: none
  std::optional<cohort::DesignResult> design;  // when the options carry a design (core/cohort/designs.hpp)
};

// The comparison of subjects already read.
Comparison compare(const std::vector<output::SubjectRecord>& subjects, const CompareOptions& options);

// Reads every finished subject document in `dir` (listed by dir/manifest.tsv when
// present, else every sub-*_topology.json) and compares them.
Comparison compare_cohort(const std::string& dir, const CompareOptions& options);

// compare_cohort, then writes group_comparison.json and group_tests.tsv into dir.
Comparison compare_and_write(const std::string& dir, const CompareOptions& options);

// The self-contained HTML report of a comparison; `created` is a date supplied by the
// caller (core has no clock).
std::string report_html(const Comparison& comparison, const std::string& created);

struct ReportOptions {
  std::string out;      // "" = <dir>/report.html
  std::string created;  // shown as the creation date
};
const OptionSection& report_option_section();
ReportOptions parse_report_options(const Json& options, const std::string& where);

}  // namespace critplex::pipeline
