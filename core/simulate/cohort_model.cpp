#include "simulate/cohort_model.hpp"

#include <cmath>
#include <cctype>
#include <cstdio>

#include "base/error.hpp"
#include "base/random.hpp"

namespace critplex::simulate {

namespace {

// Decorrelates seeds that differ by one.
constexpr std::uint64_t mix(std::uint64_t x) { return splitmix64(x); }

std::vector<double> ar1(Random& random, std::size_t length, double phi) {
  std::vector<double> x(length);
  const double innovation = std::sqrt(1.0 - phi * phi);
  double value = random.normal();  // stationary start
  for (std::size_t t = 0; t < length; ++t) {
    x[t] = value;
    value = phi * value + innovation * random.normal();
  }
  return x;
}

std::string two_digits(std::size_t i) {
  char buffer[24];
  std::snprintf(buffer, sizeof buffer, "%02zu", i);
  return buffer;
}

void check(const CohortModel& m) {
  auto bad = [](const std::string& what) { fail(ErrorKind::argument, "cohort model: " + what); };
  if (m.regions < 2) bad("regions must be at least 2");
  if (m.frames < 3) bad("frames must be at least 3");
  if (m.modules < 1 || m.modules > m.regions) bad("modules must be in [1, regions]");
  if (!(m.sampling_interval > 0.0)) bad("sampling_interval must be positive");
  for (double phi : {m.factor_ar, m.noise_ar})
    if (!(phi > -1.0 && phi < 1.0)) bad("AR(1) coefficients must be in (-1, 1)");
  if (!(m.loading_min >= 0.0 && m.loading_min <= m.loading_max)) bad("need 0 <= loading_min <= loading_max");
  if (!(m.loading_jitter >= 0.0)) bad("loading_jitter must be non-negative");
  if (!(m.age_min <= m.age_max)) bad("need age_min <= age_max");
  if (m.groups.empty()) bad("needs at least one group");
  for (const auto& g : m.groups) {
    if (g.name.empty()) bad("a group has no name");
    for (char c : g.name)
      if (!std::isalnum(static_cast<unsigned char>(c))) bad("group name '" + g.name + "' must be letters and digits only");
    if (g.subjects < 1) bad("group '" + g.name + "' needs at least one subject");
    if (!(g.global_sd >= 0.0)) bad("group '" + g.name + "': global_sd must be non-negative");
  }
}

}  // namespace

CohortModel cohort_model_from_json(const Json& options, const std::string& where) {
  OptionReader r(options, where);
  CohortModel m;
  auto count = [&](const char* key, std::size_t fallback) {
    const long long v = r.integer(key, static_cast<long long>(fallback));
    if (v < 0) fail(ErrorKind::argument, where + ": " + key + " must be non-negative");
    return static_cast<std::size_t>(v);
  };
  m.regions = count("regions", m.regions);
  m.frames = count("frames", m.frames);
  m.modules = count("modules", m.modules);
  m.sampling_interval = r.number("sampling_interval", m.sampling_interval);
  m.factor_ar = r.number("factor_ar", m.factor_ar);
  m.noise_ar = r.number("noise_ar", m.noise_ar);
  m.loading_min = r.number("loading_min", m.loading_min);
  m.loading_max = r.number("loading_max", m.loading_max);
  m.loading_jitter = r.number("loading_jitter", m.loading_jitter);
  m.age_min = r.number("age_min", m.age_min);
  m.age_max = r.number("age_max", m.age_max);
  m.seed = static_cast<std::uint64_t>(count("seed", 1));
  if (const Json* groups = r.raw("groups")) {
    if (!groups->is_array()) fail(ErrorKind::argument, where + ": \"groups\" must be a list");
    m.groups.clear();
    for (std::size_t i = 0; i < groups->size(); ++i) {
      OptionReader g((*groups)[i], where + ", groups[" + std::to_string(i) + "]");
      GroupModel gm;
      gm.name = g.text("name", "");
      const long long n = g.integer("subjects", 20);
      if (n < 1) fail(ErrorKind::argument, g.where() + ": subjects must be at least 1");
      gm.subjects = static_cast<std::size_t>(n);
      gm.global_mean = g.number("global_mean", gm.global_mean);
      gm.global_sd = g.number("global_sd", gm.global_sd);
      g.finish();
      m.groups.push_back(gm);
    }
  }
  r.finish();
  check(m);
  return m;
}

Json to_json(const CohortModel& m) {
  Json groups = Json::array();
  for (const auto& g : m.groups)
    groups.push_back({{"name", g.name}, {"subjects", g.subjects}, {"global_mean", g.global_mean}, {"global_sd", g.global_sd}});
  return {{"regions", m.regions},       {"frames", m.frames},           {"modules", m.modules},
          {"sampling_interval", m.sampling_interval}, {"factor_ar", m.factor_ar}, {"noise_ar", m.noise_ar},
          {"loading_min", m.loading_min}, {"loading_max", m.loading_max}, {"loading_jitter", m.loading_jitter},
          {"age_min", m.age_min},       {"age_max", m.age_max},         {"seed", m.seed},
          {"groups", groups}};
}

CohortPlan plan_cohort(const CohortModel& m) {
  check(m);
  CohortPlan plan;
  Random atlas(mix(m.seed));
  for (std::size_t i = 0; i < m.regions; ++i) {
    const std::size_t module = i * m.modules / m.regions;
    plan.module.push_back(module);
    plan.base_loading.push_back(m.loading_min + (m.loading_max - m.loading_min) * atlas.uniform());
    plan.region_names.push_back("mod" + std::to_string(module + 1) + "_reg" + two_digits(i + 1));
  }
  std::size_t position = 0;
  for (const auto& g : m.groups)
    for (std::size_t k = 0; k < g.subjects; ++k, ++position) {
      SimulatedSubject s;
      s.id = g.name + two_digits(k + 1);
      s.group = g.name;
      s.seed = mix(m.seed ^ mix(position + 1));
      Random random(s.seed);
      s.global_strength = std::max(0.0, g.global_mean + g.global_sd * random.normal());
      s.age = std::round((m.age_min + (m.age_max - m.age_min) * random.uniform()) * 10.0) / 10.0;
      plan.subjects.push_back(s);
    }
  return plan;
}

series::Series simulate_subject(const CohortModel& m, const CohortPlan& plan, std::size_t index) {
  if (index >= plan.subjects.size())
    fail(ErrorKind::argument, "subject index " + std::to_string(index) + " is outside the cohort of " +
                                  std::to_string(plan.subjects.size()));
  const SimulatedSubject& s = plan.subjects[index];
  Random random(mix(s.seed));  // a stream apart from the one that drew b_s and age
  std::vector<std::vector<double>> factors;
  for (std::size_t k = 0; k < m.modules; ++k) factors.push_back(ar1(random, m.frames, m.factor_ar));
  const std::vector<double> global = ar1(random, m.frames, m.factor_ar);
  series::Series out;
  out.values.resize(static_cast<Eigen::Index>(m.frames), static_cast<Eigen::Index>(m.regions));
  for (std::size_t i = 0; i < m.regions; ++i) {
    const double loading = plan.base_loading[i] + m.loading_jitter * random.normal();
    const std::vector<double> noise = ar1(random, m.frames, m.noise_ar);
    const auto& f = factors[plan.module[i]];
    for (std::size_t t = 0; t < m.frames; ++t)
      out.values(static_cast<Eigen::Index>(t), static_cast<Eigen::Index>(i)) =
          loading * f[t] + s.global_strength * global[t] + noise[t];
  }
  out.names = plan.region_names;
  out.sampling_interval = m.sampling_interval;
  out.source = "simulated subject " + s.id;
  return out;
}

}  // namespace critplex::simulate
