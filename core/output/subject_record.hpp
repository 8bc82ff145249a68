// Reading a finished subject document back (the edge where a group comparison meets
// the files a cohort run left): named fields, not display labels.
#pragma once

#include <cstddef>
#include <map>
#include <string>
#include <utility>
#include <vector>

namespace critplex::output {

// Per-subject summaries the group comparison tests, by machine name (no spaces), in
// the order they are reported. The label is for people (report, plots).
struct SummaryName {
  const char* name;
  const char* label;
};
// The fixed part of the catalogue; Betti peaks add "beta_<k>_peak" for each k >= 1.
const std::vector<SummaryName>& summary_catalogue();
// "first chi zero (density)" for "first_chi_zero", "beta_2 peak (density)" for "beta_2_peak".
std::string summary_label(const std::string& name);
// Position of a summary in the canonical order (unknown names last, in name order).
std::size_t summary_rank(const std::string& name);

struct SubjectRecord {
  std::string path;  // the document it came from
  std::string id, session, group;  // session: "" when the study has none
  std::map<std::string, double> covariates;  // NaN where the value is missing
  std::string band;
  std::size_t nodes = 0;
  std::vector<double> requested;  // grid densities as asked (shared by every subject of a cohort)
  std::map<std::string, std::vector<double>> curves;  // density, chi, betti_k, kappa_*, forman_* (NaN: missing)
  std::vector<std::pair<std::string, double>> summaries;  // machine name -> value (NaN: none), canonical order
  std::vector<double> kappa_at_first_zero;  // node curvatures at the grid point nearest the first chi zero
  std::vector<double> expected_chi;         // the Erdos-Renyi expectation on the grid (empty: none)
  std::string null_model = "none";
  std::vector<double> null_mean_chi;        // the subject's null model's mean chi (empty: none)
  std::vector<double> null_first_zeros;     // per null draw (NaN: none)
  std::string null_warning;                 // why the null z-score is not given ("" when it is)

  double summary(const std::string& name) const;  // NaN when absent
};

// Reads sub-<id>_topology.json; `band` picks a band ("" = the first). Errors name the file.
SubjectRecord read_subject_record(const std::string& path, const std::string& band);

}  // namespace critplex::output
