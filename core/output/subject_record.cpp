#include "output/subject_record.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "base/error.hpp"
#include "base/options.hpp"
#include "io/files.hpp"

namespace critplex::output {

namespace {

const double nan_value = std::numeric_limits<double>::quiet_NaN();

double number_or_nan(const Json& j) { return j.is_number() ? j.get<double>() : nan_value; }

std::vector<double> numbers(const Json& array) {
  std::vector<double> v;
  if (array.is_array())
    for (const auto& x : array) v.push_back(number_or_nan(x));
  return v;
}

const Json& member(const Json& object, const char* key, const std::string& path) {
  if (!object.is_object() || !object.contains(key))
    fail(ErrorKind::parse, "'" + path + "': not a critplex subject document (no \"" + key + "\")");
  return object.at(key);
}

}  // namespace

const std::vector<SummaryName>& summary_catalogue() {
  static const std::vector<SummaryName> names{
      {"first_chi_zero", "first chi zero (density)"},
      {"chi_zero_2", "chi zero 2 (density)"},
      {"chi_zero_3", "chi zero 3 (density)"},
      {"kappa_sd_at_first_chi_zero", "kappa sd at first chi zero"},
      {"kappa_skewness_at_first_chi_zero", "kappa skewness at first chi zero"},
      {"kappa_kurtosis_at_first_chi_zero", "kappa kurtosis at first chi zero"},
      {"forman_mean_at_first_chi_zero", "Forman mean at first chi zero"},
      {"first_chi_zero_null_z", "first chi zero, z against the null"},
      {"first_chi_zero_null_percentile", "first chi zero, percentile rank among the null draws"}};
  return names;
}

std::string summary_label(const std::string& name) {
  for (const auto& s : summary_catalogue())
    if (name == s.name) return s.label;
  if (name.rfind("beta_", 0) == 0 && name.size() > 10 && name.compare(name.size() - 5, 5, "_peak") == 0)
    return name.substr(0, name.size() - 5) + " peak (density)";
  return name;
}

std::size_t summary_rank(const std::string& name) {
  const auto& c = summary_catalogue();
  // Betti peaks sit after the chi zeros.
  if (name.rfind("beta_", 0) == 0) return 3;
  for (std::size_t i = 0; i < c.size(); ++i)
    if (name == c[i].name) return i < 3 ? i : i + 1;
  return c.size() + 1;
}

double SubjectRecord::summary(const std::string& name) const {
  for (const auto& [n, v] : summaries)
    if (n == name) return v;
  return nan_value;
}

SubjectRecord read_subject_record(const std::string& path, const std::string& band_name) {
  const Json doc = parse_json_text(io::read_file(path), "'" + path + "'", ErrorKind::parse);
  SubjectRecord s;
  s.path = path;
  s.id = doc.value("subject", "");
  s.session = doc.value("session", "");
  s.group = doc.value("group", "");
  const Json covariates = doc.value("covariates", Json::object());
  for (auto it = covariates.begin(); it != covariates.end(); ++it) s.covariates[it.key()] = number_or_nan(it.value());
  const Json* band = nullptr;
  for (const auto& b : member(doc, "bands", path))
    if (band_name.empty() || b.value("band", "") == band_name) {
      band = &b;
      break;
    }
  if (band == nullptr) fail(ErrorKind::data, "'" + path + "': no band named \"" + band_name + "\"");
  s.band = band->value("band", "");
  const Json& sweep = member(*band, "sweep", path);
  s.nodes = sweep.value("nodes", std::size_t{0});
  for (const auto& p : member(sweep, "grid", path)) s.requested.push_back(p.value("requested", 0.0));
  const Json& curves = member(*band, "curves", path);
  for (auto it = curves.begin(); it != curves.end(); ++it) s.curves[it.key()] = numbers(it.value());

  std::vector<std::pair<std::string, double>> found;
  if (sweep.contains("transitions") && sweep["transitions"].is_object()) {
    const Json& t = sweep["transitions"];
    found.emplace_back("first_chi_zero", number_or_nan(t.value("first_chi_zero", Json())));
    if (t.contains("chi_zeros") && t["chi_zeros"].is_array()) {
      const auto& zeros = t["chi_zeros"];
      for (std::size_t k = 1; k < std::min<std::size_t>(zeros.size(), 3); ++k)
        found.emplace_back("chi_zero_" + std::to_string(k + 1), number_or_nan(zeros[k].value("density", Json())));
    }
    // Curvature moments at the first chi zero. The mean is left out: by Gauss-Bonnet it
    // equals chi / N, which is 0 at a zero of chi.
    if (t.contains("summary") && t["summary"].is_array())
      for (const auto& record : t["summary"])
        if (record.value("kind", "") == "chi_zero" && record.contains("curvature") && record["curvature"].is_object()) {
          const Json& c = record["curvature"];
          found.emplace_back("kappa_sd_at_first_chi_zero", number_or_nan(c.value("kappa_sd", Json())));
          found.emplace_back("kappa_skewness_at_first_chi_zero", number_or_nan(c.value("kappa_skewness", Json())));
          found.emplace_back("kappa_kurtosis_at_first_chi_zero", number_or_nan(c.value("kappa_kurtosis", Json())));
          found.emplace_back("forman_mean_at_first_chi_zero", number_or_nan(c.value("forman_mean", Json())));
          break;
        }
    if (t.contains("betti_peaks") && t["betti_peaks"].is_array())
      for (const auto& p : t["betti_peaks"]) {
        const auto k = p.value("k", std::size_t{0});
        if (k >= 1) found.emplace_back("beta_" + std::to_string(k) + "_peak", number_or_nan(p.value("density", Json())));
      }
    if (t.contains("random_graph") && t["random_graph"].is_object())
      s.expected_chi = numbers(t["random_graph"].value("expected_chi", Json()));
  }
  // Node curvatures at the grid point nearest the first chi zero.
  const double first = found.empty() ? nan_value : found.front().second;
  if (std::isfinite(first) && sweep.contains("curvature") && sweep["curvature"].is_object() &&
      sweep["curvature"].contains("node_kappa")) {
    const auto& density = s.curves["density"];
    std::size_t best = 0;
    for (std::size_t i = 1; i < density.size(); ++i)
      if (std::fabs(density[i] - first) < std::fabs(density[best] - first)) best = i;
    for (const auto& node : sweep["curvature"]["node_kappa"]["values"])
      if (best < node.size()) s.kappa_at_first_zero.push_back(number_or_nan(node[best]));
  }
  if (band->contains("null") && band->at("null").is_object()) {
    const Json& null = band->at("null");
    s.null_model = null.value("model", "none");
    s.null_mean_chi = numbers(null.value("mean_chi", Json()));
    const Json first_zero = null.value("first_chi_zero", Json::object());
    s.null_first_zeros = numbers(first_zero.value("values", Json()));
    double z = number_or_nan(first_zero.value("z", Json()));
    if (!first_zero.contains("min_draws_for_z")) {
      // Written before z needed enough draws: apply today's default rule to it.
      const auto draws = std::count_if(s.null_first_zeros.begin(), s.null_first_zeros.end(),
                                       [](double x) { return std::isfinite(x); });
      if (draws < 100 && !std::isnan(z)) {
        z = nan_value;
        s.null_warning = std::to_string(draws) + " null draws with a transition (document from an earlier version), "
                         "fewer than 100: no z-score";
      }
    }
    found.emplace_back("first_chi_zero_null_z", z);
    if (first_zero.contains("percentile"))
      found.emplace_back("first_chi_zero_null_percentile", number_or_nan(first_zero.value("percentile", Json())));
    if (first_zero.value("warning", Json()).is_string()) s.null_warning = first_zero["warning"].get<std::string>();
  }
  std::stable_sort(found.begin(), found.end(),
                   [](const auto& a, const auto& b) { return summary_rank(a.first) < summary_rank(b.first); });
  s.summaries = std::move(found);
  return s;
}

}  // namespace critplex::output
