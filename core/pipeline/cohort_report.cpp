// The cohort report: a comparison mapped onto core/report's value types.
#include <array>
#include <cmath>
#include <cstdio>
#include <limits>
#include <map>

#include "base/error.hpp"
#include "output/comparison.hpp"
#include "output/subject_record.hpp"
#include "pipeline/compare.hpp"
#include "pipeline/methods.hpp"
#include "report/report.hpp"

namespace critplex::pipeline {

namespace {

const double nan_value = std::numeric_limits<double>::quiet_NaN();

report::Band band_of(const cohort::Band& b) { return {b.mean, b.lower, b.upper}; }

// log10 |chi| of the mean curve; the band maps through |.| and is open below where it
// straddles zero (the mean of log|chi| would be undefined at each zero).
report::Band log_abs_band(const cohort::Band& b) {
  report::Band out;
  for (std::size_t p = 0; p < b.mean.size(); ++p) {
    const double lo = b.lower[p], hi = b.upper[p];
    const bool straddles = lo <= 0.0 && hi >= 0.0;
    auto finite_or_nan = [](double x) { return std::isfinite(x) ? x : nan_value; };
    out.mean.push_back(finite_or_nan(std::log10(std::fabs(b.mean[p]))));
    out.lower.push_back(straddles ? nan_value : finite_or_nan(std::log10(std::min(std::fabs(lo), std::fabs(hi)))));
    out.upper.push_back(finite_or_nan(std::log10(std::max(std::fabs(lo), std::fabs(hi)))));
  }
  return out;
}

std::string method_of(const cohort::PermutationResult& r, std::uint64_t seed) {
  return r.exact ? "exact, " + std::to_string(r.null_size) + " relabellings"
                 : "Monte Carlo, " + std::to_string(r.null_size) + " relabellings, seed " + std::to_string(seed);
}

std::string text_of(const Json& v) {
  if (v.is_null()) return "n/a";
  if (v.is_string()) return v.get<std::string>();
  if (v.is_number_float()) {
    char buf[32];
    std::snprintf(buf, sizeof buf, "%.4g", v.get<double>());
    return buf;
  }
  return v.dump();
}

// The provenance document (pipeline/provenance.hpp) as report tables.
void add_provenance(const Json& p, report::ReportInput& in) {
  if (!p.is_object()) return;
  in.config_given_json = p.value("config_given", Json()).dump(1);
  in.config_resolved_json = p.value("config_resolved", Json()).dump(1);
  const Json v = p.value("versions", Json::object());
  for (auto it = v.begin(); it != v.end(); ++it) in.versions.push_back({it.key(), text_of(it.value())});
  in.checksums.header = {"subject", "input", "path", "SHA-256"};
  for (const auto& s : p.value("inputs", Json::array())) {
    const Json files = s.value("inputs", Json::object());
    for (auto it = files.begin(); it != files.end(); ++it)
      in.checksums.rows.push_back({s.value("subject", ""), it.key(), it.value().value("path", ""),
                                   it.value().value("sha256", "n/a")});
  }
  in.quality.header = {"subject", "group", "status", "frames used / total", "censored", "estimator",
                       "shrinkage intensity", "regions", "regions dropped", "null draws", "message"};
  for (const auto& q : p.value("quality", Json::array())) {
    const std::string id = q.value("subject", "") + (q.value("session", "").empty() ? "" : " (" + q.value("session", "") + ")");
    std::string message = q.value("message", "");
    if (q.value("null_warning", Json()).is_string()) message += (message.empty() ? "" : "; ") + std::string("too few null draws for a z-score");
    in.quality.rows.push_back({id, q.value("group", ""), q.value("status", ""),
                               text_of(q.value("frames_used", Json())) + " / " + text_of(q.value("frames", Json())),
                               text_of(q.value("frames_censored", Json())), q.value("estimator", "n/a"),
                               text_of(q.value("shrinkage_intensity", Json())), text_of(q.value("regions", Json())),
                               text_of(q.value("regions_dropped", Json())), text_of(q.value("null_draws", Json())),
                               message.empty() ? "" : message});
  }
}

}  // namespace

std::string number_text(double x, int digits) {
  if (!std::isfinite(x)) return "n/a";
  char buf[40];
  std::snprintf(buf, sizeof buf, "%.*g", digits, x);
  return buf;
}

// The design's tests as a table: tested measures first, as the design listed them.
void add_design(const cohort::DesignResult& d, report::ReportInput& in) {
  in.design_title = std::string("Study design: ") + cohort::design_name(d.spec.kind) + " (permutation tests per summary)";
  in.design_tests.header = {"summary", "term", "levels", "n", "statistic", "estimate [interval]", "effect",
                            "p", "p adjusted", "rearrangements"};
  for (int pass = 0; pass < 2; ++pass)
    for (const auto& t : d.tests) {
      if (t.tested != (pass == 0)) continue;
      std::string levels;
      for (const auto& l : t.levels) levels += (levels.empty() ? "" : " / ") + l;
      if (!t.tested) {
        in.design_tests.rows.push_back({output::summary_label(t.measure), t.term, levels, std::to_string(t.n), "", "",
                                        "", "", "", "not tested: " + t.note});
        continue;
      }
      in.design_tests.rows.push_back(
          {output::summary_label(t.measure), t.term, levels, std::to_string(t.n),
           t.statistic_name + " = " + number_text(t.statistic, 4),
           number_text(t.estimate, 4) + " [" + number_text(t.estimate_lower, 3) + ", " + number_text(t.estimate_upper, 3) + "]",
           t.effect_name + " " + number_text(t.effect, 3), number_text(t.p_value, 4), number_text(t.p_adjusted, 4),
           (t.exact ? "exact, " : "Monte Carlo, ") + std::to_string(t.null_size)});
    }
  in.design_notes = d.notes;
  if (!d.spec.covariates.empty()) {
    std::string cov;
    for (const auto& c : d.spec.covariates) cov += (cov.empty() ? "" : ", ") + c;
    in.design_notes.push_back("Covariates " + cov + " by Freedman-Lane permutation of the nuisance model's residuals.");
  }
  if (!d.spec.blocks.empty()) in.design_notes.push_back("Rearrangements within the blocks of \"" + d.spec.blocks + "\".");
  in.design_notes.push_back("p adjusted: Benjamini-Hochberg across the tested summaries.");
}

// A paired design's figure: each person's value at the two levels joined by a thin line,
// the level means on top, for the first tested summary (the first transition when tested).
void add_paired_figure(const Comparison& c, const cohort::DesignResult& d, report::ReportInput& in) {
  if (d.spec.kind != cohort::DesignKind::paired || d.spec.within != "session") return;
  const cohort::DesignTest* shown = nullptr;
  for (const auto& t : d.tests) {
    if (!t.tested || t.levels.size() != 2) continue;
    if (t.measure == "first_chi_zero") {
      shown = &t;
      break;
    }
    if (shown == nullptr) shown = &t;
  }
  if (shown == nullptr) return;
  std::map<std::string, std::array<double, 2>> person;  // subject -> value at each level
  for (const auto& g : c.groups) {
    const auto values = g.summaries.find(shown->measure);
    if (values == g.summaries.end() || g.sessions.size() != g.subjects.size()) continue;
    for (std::size_t i = 0; i < g.subjects.size(); ++i)
      for (std::size_t l = 0; l < 2; ++l)
        if (g.sessions[i] == shown->levels[l]) {
          auto& v = person.try_emplace(g.subjects[i], std::array<double, 2>{nan_value, nan_value}).first->second;
          v[l] = values->second[i];
        }
  }
  report::Line mean;
  mean.label = "mean of the pairs";
  mean.x = {0.0, 1.0};
  double sum[2] = {0, 0};
  std::size_t n = 0;
  for (const auto& [id, v] : person)
    if (std::isfinite(v[0]) && std::isfinite(v[1])) {
      mean.traces.push_back({v[0], v[1]});
      sum[0] += v[0];
      sum[1] += v[1];
      ++n;
    }
  if (n < 2) return;
  mean.y = {sum[0] / static_cast<double>(n), sum[1] / static_cast<double>(n)};
  report::LinePlot plot;
  plot.title = output::summary_label(shown->measure) + ": " + shown->levels[0] + " and " + shown->levels[1];
  plot.x_label = "session (0 = " + shown->levels[0] + ", 1 = " + shown->levels[1] + ")";
  plot.y_label = output::summary_label(shown->measure);
  plot.caption = "Thin lines: each of " + std::to_string(n) + " people with both sessions; paired test " +
                 shown->statistic_name + " = " + number_text(shown->statistic, 3) + ", p = " + number_text(shown->p_value, 3);
  plot.lines.push_back(std::move(mean));
  in.design_plots.push_back(std::move(plot));
}

std::string report_html(const Comparison& c, const std::string& created) {
  report::ReportInput in;
  in.title = "Topology of functional networks: group comparison";
  in.software = std::string("critplex ") + CRITPLEX_VERSION_STRING;
  in.created = created;
  {
    Json options{{"band", c.options.band},           {"groups", c.options.groups},
                 {"statistic", c.options.statistic}, {"exact_limit", c.options.exact_limit},
                 {"resamples", c.options.resamples}, {"seed", c.options.seed},
                 {"confidence", c.options.confidence}, {"covariates", c.options.covariates},
                 {"cluster_curves", c.options.cluster_curves}};
    in.options_json = options.dump(1);
  }
  in.facts.push_back({"regions (nodes)", std::to_string(c.regions)});
  in.warnings = c.warnings;
  add_provenance(c.provenance, in);
  {
    const MethodsText m = methods_text(c);
    for (const auto& p : m.paragraphs) in.methods_text += p + "\n\n";
    in.methods_text += "References:";
    for (const auto& r : m.references) in.methods_text += "\n\n" + r;
  }
  for (const auto& g : c.groups) {
    report::GroupResults gr;
    gr.name = g.name;
    gr.subjects = g.subjects;
    gr.density = c.density;
    const auto chi = g.curves.find("chi");
    if (chi == g.curves.end()) fail(ErrorKind::data, "comparison: group \"" + g.name + "\" has no chi curve");
    gr.chi = band_of(chi->second);
    gr.log_abs_chi = log_abs_band(chi->second);
    for (int k = 0; g.curves.count("betti_" + std::to_string(k)); ++k)
      gr.betti.push_back(band_of(g.curves.at("betti_" + std::to_string(k))));
    const auto first = g.summaries.find("first_chi_zero");
    gr.first_transition = first != g.summaries.end() ? first->second : std::vector<double>(g.subjects.size(), nan_value);
    if (const auto z = g.summaries.find("first_chi_zero_null_z"); z != g.summaries.end()) gr.transition_z = z->second;
    if (const auto r = g.summaries.find("first_chi_zero_null_percentile"); r != g.summaries.end())
      gr.transition_percentile = r->second;
    // One value per subject (the SD of its regions' curvature), not the pooled nodes.
    if (const auto k = g.summaries.find("kappa_sd_at_first_chi_zero"); k != g.summaries.end())
      gr.curvature_at_transition = k->second;
    gr.subject_chi = g.subject_chi;
    if (gr.subject_chi.size() != g.subjects.size()) gr.subject_chi.clear();  // written by an older version
    in.groups.push_back(std::move(gr));
  }
  if (c.null_baseline) {
    report::NullBaseline nb;
    nb.label = c.null_baseline->label;
    nb.density = c.null_baseline->density;
    nb.chi = c.null_baseline->chi;
    in.null_baseline = nb;
    in.facts.push_back({"null baseline", nb.label});
  }
  for (const auto& t : c.tests) {
    if (!t.row.tested) continue;
    const cohort::PermutationResult& r = t.row.result;
    report::TestRow row;
    row.summary = output::summary_label(t.row.summary) + " (" + t.group_a + " vs " + t.group_b + ")";
    row.statistic = c.options.statistic;
    row.value = r.statistic;
    row.hedges_g = r.effect.hedges_g;
    row.g_lower = t.row.g_interval.lower;
    row.g_upper = t.row.g_interval.upper;
    row.p_value = r.p_value;
    row.p_adjusted = t.row.p_adjusted;
    row.method = method_of(r, c.options.seed);
    // The test of each strip plot's summary, printed under it (the first group pair).
    std::string* note = t.row.summary == "first_chi_zero"                   ? &in.transition_test_note
                        : t.row.summary == "first_chi_zero_null_z"          ? &in.z_test_note
                        : t.row.summary == "first_chi_zero_null_percentile" ? &in.rank_test_note
                        : t.row.summary == "kappa_sd_at_first_chi_zero"     ? &in.curvature_test_note
                                                                            : nullptr;
    if (note && note->empty()) {
      char buf[320];
      std::snprintf(buf, sizeof buf, "%s vs %s: %s %.4g, Hedges g %.2f, permutation p = %.4g (%s)", t.group_a.c_str(),
                    t.group_b.c_str(), c.options.statistic == "mean_difference" ? "difference in means" : c.options.statistic.c_str(),
                    row.value, row.hedges_g, row.p_value, row.method.c_str());
      *note = buf;
    }
    if (t.headline && t.null_histogram && !t.null_histogram->counts.empty()) {
      report::HistogramPlot hp;
      hp.title = output::summary_label(t.row.summary) + ": " + t.group_a + " vs " + t.group_b;
      hp.x_label = c.options.statistic + " under relabelling (" + (t.row.on_residuals ? "covariate residuals" : "values") + ")";
      hp.edges = t.null_histogram->edges;
      for (auto n : t.null_histogram->counts) hp.counts.push_back(static_cast<double>(n));
      hp.observed = r.statistic;
      char buf[160];
      std::snprintf(buf, sizeof buf, "p = %.4g (%s)", r.p_value, row.method.c_str());
      hp.note = buf;
      in.null_histograms.push_back(std::move(hp));
    }
    in.tests.push_back(std::move(row));
  }
  in.test_notes.push_back("Multiple comparisons: " + output::multiple_comparison_family(c) + ".");
  in.test_notes.push_back("Effect size: " + output::effect_size_method(c) + ".");
  if (!c.options.covariates.empty()) in.test_notes.push_back("Covariate model: " + output::covariate_model(c) + ".");
  for (const auto& cl : c.clusters) {
    if (!cl.result) continue;
    if (cl.curve == "chi") {
      in.cluster_note = std::string("cluster permutation test of chi, ") + (cl.result->exact ? "exact, " : "Monte Carlo, ") +
                        std::to_string(cl.result->null_size) + " relabellings";
      for (const auto& k : cl.result->clusters)
        if (k.p_value <= 0.05) {
          char label[120];
          std::snprintf(label, sizeof label, "p = %.3g%s", k.p_value,
                        c.groups.size() > 2 ? (" (" + cl.group_a + ")").c_str() : "");
          in.chi_clusters.push_back({cl.density[k.first], cl.density[k.last], label});
        }
    }
    for (const auto& k : cl.result->clusters) {
      report::TestRow row;
      char name[200];
      std::snprintf(name, sizeof name, "%s curve, densities %.3f-%.3f (%s vs %s)", cl.curve.c_str(),
                    cl.density[k.first], cl.density[k.last], cl.group_a.c_str(), cl.group_b.c_str());
      row.summary = name;
      row.statistic = "cluster mass (sum of t)";
      row.value = k.mass;
      row.hedges_g = nan_value;
      row.p_value = k.p_value;
      row.p_adjusted = nan_value;  // cluster p-values are already corrected along the axis
      row.method = std::string("cluster permutation, ") + (cl.result->exact ? "exact" : "Monte Carlo");
      in.tests.push_back(std::move(row));
    }
  }
  if (c.design) {
    add_design(*c.design, in);
    add_paired_figure(c, *c.design, in);
  }
  return report::build_report(in);
}

const OptionSection& report_option_section() {
  static const OptionSection section{
      "report",
      "report options",
      "cpx_cohort_report, critplex report",
      "The HTML report of a comparison.",
      {{.key = "out", .type = "string", .default_note = "<dir>/report.html", .meaning = "where the report is written"},
       {.key = "created", .type = "string", .meaning = "text shown as the creation date (core has no clock)"}}};
  return section;
}

ReportOptions parse_report_options(const Json& options, const std::string& where) {
  SchemaReader r(options, report_option_section(), where);
  ReportOptions o;
  o.out = r.text("out");
  o.created = r.text("created");
  r.finish();
  return o;
}

}  // namespace critplex::pipeline
