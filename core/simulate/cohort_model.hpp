// The demo study's generative model (invented data; docs/demo-study.md): a fictional sleep laboratory compares rested and sleep-deprived volunteers.
//
// All subjects share one "atlas": R regions in M modules of near-equal size (contiguous
// blocks) and a base loading a_i per region, uniform in [loading_min, loading_max], drawn
// from the study seed. Subject s of group g then gets
//   x_i(t) = l_si f_{m(i)}(t) + b_s g(t) + e_i(t),
//   l_si = a_i + loading_jitter * z,       b_s = max(0, global_mean_g + global_sd_g * z'),
// where f_1..f_M (module factors), g (a global signal) and e_i (regional noise) are
// independent unit-variance AR(1) processes (coefficients factor_ar and noise_ar) and
// z, z' are standard normal. The deprived group has the larger global_mean, so its
// network is more globally coupled. Each subject's numbers come from its own seed,
// derived from the study seed and its position, so subjects can be made in any order.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "base/options.hpp"
#include "series/series.hpp"

namespace critplex::simulate {

struct GroupModel {
  std::string name;
  std::size_t subjects = 20;
  double global_mean = 0.3;
  double global_sd = 0.08;
};

struct CohortModel {
  std::size_t regions = 90;
  std::size_t frames = 600;
  std::size_t modules = 7;
  double sampling_interval = 0.8;  // seconds (repetition time)
  double factor_ar = 0.9;
  double noise_ar = 0.3;
  double loading_min = 0.4;
  double loading_max = 0.9;
  double loading_jitter = 0.05;
  double age_min = 19.0, age_max = 35.0;  // an invented covariate, unrelated to the signals
  std::vector<GroupModel> groups{{"rested", 20, 0.25, 0.08}, {"deprived", 20, 0.5, 0.08}};
  std::uint64_t seed = 1;
};

// Parses {"regions", "frames", "modules", "sampling_interval", "factor_ar", "noise_ar",
// "loading_min", "loading_max", "loading_jitter", "age_min", "age_max", "seed",
// "groups": [{"name", "subjects", "global_mean", "global_sd"}]}; unknown keys are errors.
CohortModel cohort_model_from_json(const Json& options, const std::string& where);
Json to_json(const CohortModel& model);

struct SimulatedSubject {
  std::string id;      // e.g. "rested01" (BIDS-style label: letters and digits)
  std::string group;
  std::uint64_t seed = 0;
  double global_strength = 0.0;  // b_s
  double age = 0.0;              // years, invented
};

struct CohortPlan {
  std::vector<SimulatedSubject> subjects;  // the manifest, in group order
  std::vector<std::size_t> module;         // module of each region (0-based)
  std::vector<double> base_loading;        // a_i
  std::vector<std::string> region_names;   // "mod1_reg01", ...
};

// Checks the model and draws the shared atlas and every subject's parameters (cheap).
CohortPlan plan_cohort(const CohortModel& model);

// The time series of subject `index` of the plan: frames x regions, sampling_interval set.
series::Series simulate_subject(const CohortModel& model, const CohortPlan& plan, std::size_t index);

}  // namespace critplex::simulate
