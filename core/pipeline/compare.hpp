// Group comparison of finished subjects: group mean curves with bootstrap bands,
// permutation tests of per-subject summaries (Hedges g, Benjamini-Hochberg across the
// table, covariates regressed out when asked), a cluster-based permutation test along
// the density axis, and the null baselines; then the report built from it.
#pragma once

#include <string>
#include <vector>

#include "base/options.hpp"

namespace critplex::pipeline {

struct CompareOptions {
  std::string band;                  // "" = each subject's first band
  std::vector<std::string> groups;   // order; empty = order of first appearance
  std::string statistic = "mean_difference";
  std::uint64_t exact_limit = 20000, resamples = 9999, seed = 1;
  double confidence = 0.95;
  std::vector<std::string> covariates;     // regressed out of every summary before testing
  std::vector<std::string> cluster_curves{"chi"};
};
CompareOptions parse_compare_options(const Json& options);

// Reads every finished subject document in `dir` (listed by dir/manifest.tsv when
// present, else every sub-*_topology.json) and returns the comparison document.
Json compare_cohort(const std::string& dir, const CompareOptions& options);

// Writes group_comparison.json and group_tests.tsv into dir; returns the document.
Json compare_and_write(const std::string& dir, const CompareOptions& options);

// The self-contained HTML report of a comparison document; `created` is a date supplied
// by the caller (core has no clock).
std::string report_html(const Json& comparison, const std::string& created);

}  // namespace critplex::pipeline
