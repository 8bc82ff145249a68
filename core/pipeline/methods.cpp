#include "pipeline/methods.hpp"

#include <algorithm>
#include <cstdio>
#include <map>

namespace critplex::pipeline {

namespace {

// Full references, keyed by their short citation (as in docs/methods.md).
const std::map<std::string, std::string>& reference_list() {
  static const std::map<std::string, std::string> refs{
      {"Butterworth 1930", "Butterworth S (1930). On the theory of filter amplifiers. Experimental Wireless and the "
                           "Wireless Engineer 7:536-541."},
      {"Power et al. 2012", "Power JD, Barnes KA, Snyder AZ, Schlaggar BL, Petersen SE (2012). Spurious but systematic "
                            "correlations in functional connectivity MRI networks arise from subject motion. NeuroImage "
                            "59:2142-2154."},
      {"Ledoit & Wolf 2004", "Ledoit O, Wolf M (2004). A well-conditioned estimator for large-dimensional covariance "
                             "matrices. Journal of Multivariate Analysis 88:365-411."},
      {"Chen et al. 2010", "Chen Y, Wiesel A, Eldar YC, Hero AO (2010). Shrinkage algorithms for MMSE covariance "
                           "estimation. IEEE Transactions on Signal Processing 58:5016-5029."},
      {"Schafer & Strimmer 2005", "Schafer J, Strimmer K (2005). A shrinkage approach to large-scale covariance matrix "
                                  "estimation and implications for functional genomics. Statistical Applications in "
                                  "Genetics and Molecular Biology 4:32."},
      {"Marple 1999", "Marple SL (1999). Computing the discrete-time analytic signal via FFT. IEEE Transactions on "
                      "Signal Processing 47:2600-2603."},
      {"Lachaux et al. 1999", "Lachaux JP, Rodriguez E, Martinerie J, Varela FJ (1999). Measuring phase synchrony in "
                              "brain signals. Human Brain Mapping 8:194-208."},
      {"Stam et al. 2007", "Stam CJ, Nolte G, Daffertshofer A (2007). Phase lag index. Human Brain Mapping 28:1178-1193."},
      {"Vinck et al. 2011", "Vinck M, Oostenveld R, van Wingerden M, Battaglia F, Pennartz CMA (2011). An improved index "
                            "of phase-synchronization for electrophysiological data in the presence of volume-conduction, "
                            "noise and sample-size bias. NeuroImage 55:1548-1565."},
      {"Hipp et al. 2012", "Hipp JF, Hawellek DJ, Corbetta M, Siegel M, Engel AK (2012). Large-scale cortical correlation "
                           "structure of spontaneous oscillatory activity. Nature Neuroscience 15:884-890."},
      {"Edelsbrunner et al. 2002", "Edelsbrunner H, Letscher D, Zomorodian A (2002). Topological persistence and "
                                   "simplification. Discrete & Computational Geometry 28:511-533."},
      {"Zomorodian & Carlsson 2005", "Zomorodian A, Carlsson G (2005). Computing persistent homology. Discrete & "
                                     "Computational Geometry 33:249-274."},
      {"Bauer 2021", "Bauer U (2021). Ripser: efficient computation of Vietoris-Rips persistence barcodes. Journal of "
                     "Applied and Computational Topology 5:391-423."},
      {"Knill 2011", "Knill O (2011). A graph theoretical Gauss-Bonnet-Chern theorem. arXiv:1111.5395."},
      {"Sreejith et al. 2016", "Sreejith RP, Mohanraj K, Jost J, Saucan E, Samal A (2016). Forman curvature for complex "
                               "networks. Journal of Statistical Mechanics 063206."},
      {"Erdos & Renyi 1960", "Erdos P, Renyi A (1960). On the evolution of random graphs. Publications of the "
                             "Mathematical Institute of the Hungarian Academy of Sciences 5:17-61."},
      {"Theiler et al. 1992", "Theiler J, Eubank S, Longtin A, Galdrikian B, Farmer JD (1992). Testing for nonlinearity "
                              "in time series: the method of surrogate data. Physica D 58:77-94."},
      {"Prichard & Theiler 1994", "Prichard D, Theiler J (1994). Generating surrogate data for time series with several "
                                  "simultaneously measured variables. Physical Review Letters 73:951-954."},
      {"Schreiber & Schmitz 1996", "Schreiber T, Schmitz A (1996). Improved surrogate data for nonlinearity tests. "
                                   "Physical Review Letters 77:635-638."},
      {"Maslov & Sneppen 2002", "Maslov S, Sneppen K (2002). Specificity and stability in topology of protein networks. "
                                "Science 296:910-913."},
      {"Phipson & Smyth 2010", "Phipson B, Smyth GK (2010). Permutation p-values should never be zero: calculating exact "
                               "p-values when permutations are randomly drawn. Statistical Applications in Genetics and "
                               "Molecular Biology 9:39."},
      {"Hedges 1981", "Hedges LV (1981). Distribution theory for Glass's estimator of effect size and related "
                      "estimators. Journal of Educational Statistics 6:107-128."},
      {"Hedges & Olkin 1985", "Hedges LV, Olkin I (1985). Statistical Methods for Meta-Analysis. Academic Press, Orlando."},
      {"Benjamini & Hochberg 1995", "Benjamini Y, Hochberg Y (1995). Controlling the false discovery rate: a practical and "
                                    "powerful approach to multiple testing. Journal of the Royal Statistical Society B "
                                    "57:289-300."},
      {"Efron & Tibshirani 1993", "Efron B, Tibshirani RJ (1993). An Introduction to the Bootstrap. Chapman & Hall, New York."},
      {"Maris & Oostenveld 2007", "Maris E, Oostenveld R (2007). Nonparametric statistical testing of EEG- and MEG-data. "
                                  "Journal of Neuroscience Methods 164:177-190."},
  };
  return refs;
}

std::string fmt(double x) {
  char buf[32];
  std::snprintf(buf, sizeof buf, "%g", x);
  return buf;
}

struct Writer {
  MethodsText out;
  std::string cite(const std::string& key) {
    const std::string& full = reference_list().at(key);
    if (std::find(out.references.begin(), out.references.end(), full) == out.references.end()) out.references.push_back(full);
    return key;
  }
};

std::string signals(const Json& connect, Writer& w) {
  std::string s = "Regional time series were ";
  const Json clean = connect.value("clean", Json::object());
  std::vector<std::string> steps;
  if (clean.contains("regressor_table")) steps.push_back("regressed on confound time courses by ordinary least squares");
  if (clean.value("trend_order", -1) >= 0)
    steps.push_back("detrended with a polynomial of order " + std::to_string(clean.value("trend_order", -1)));
  const Json censor = clean.value("censor", Json::object());
  if (censor.contains("motion_column"))
    steps.push_back("censored at framewise displacement above " + fmt(censor.value("motion_limit", 0.5)) + " (" +
                    w.cite("Power et al. 2012") + ")");
  else if (censor.contains("frame_mask"))
    steps.push_back("censored with a frame mask");
  const Json filter = connect.value("filter", Json::object());
  const bool low = filter.contains("low_hz"), high = filter.contains("high_hz");
  if (connect.contains("bands") && connect["bands"].is_object() && !connect["bands"].empty()) {
    steps.push_back("split into " + std::to_string(connect["bands"].size()) + " named frequency bands");
  } else if (low || high) {
    std::string range = low && high ? fmt(filter["low_hz"].get<double>()) + "-" + fmt(filter["high_hz"].get<double>()) + " Hz"
                        : low       ? "above " + fmt(filter["low_hz"].get<double>()) + " Hz"
                                    : "below " + fmt(filter["high_hz"].get<double>()) + " Hz";
    if (filter.value("design", "butterworth") == "butterworth")
      steps.push_back("band-limited to " + range + " with a Butterworth filter of order " +
                      std::to_string(filter.value("order", 4)) + " run forward and backward for zero phase (" +
                      w.cite("Butterworth 1930") + ")");
    else
      steps.push_back("band-limited to " + range + " with a mask in the Fourier domain");
  }
  if (steps.empty()) steps.push_back("used without cleaning or band limiting");
  for (std::size_t i = 0; i < steps.size(); ++i) s += (i == 0 ? "" : i + 1 == steps.size() ? " and " : ", ") + steps[i];
  s += ". ";
  const std::string m = connect.value("method", "pearson");
  // Only the estimator used is described (and cited).
  auto estimator = [&](const std::string& name) -> std::string {
    if (name == "pearson") return "Pearson correlation";
    if (name == "ledoit_wolf") return "the Ledoit-Wolf shrinkage correlation (" + w.cite("Ledoit & Wolf 2004") + ")";
    if (name == "oas") return "the oracle approximating shrinkage correlation (" + w.cite("Chen et al. 2010") + ")";
    if (name == "shrinkage_correlation") return "the shrinkage correlation of " + w.cite("Schafer & Strimmer 2005");
    if (name == "partial") return "partial correlation from the shrunk precision matrix";
    const std::string analytic = " of the analytic signal (" + w.cite("Marple 1999") + ")";
    if (name == "plv") return "the phase locking value (" + w.cite("Lachaux et al. 1999") + ")" + analytic;
    if (name == "pli") return "the phase lag index (" + w.cite("Stam et al. 2007") + ")" + analytic;
    if (name == "wpli") return "the weighted phase lag index (" + w.cite("Vinck et al. 2011") + ")" + analytic;
    if (name == "aec") return "amplitude envelope correlation (" + w.cite("Hipp et al. 2012") + ")";
    if (name == "aec_orthogonalised")
      return "amplitude envelope correlation after pairwise orthogonalisation (" + w.cite("Hipp et al. 2012") + ")";
    return name;
  };
  s += "Connectivity between every pair of regions was estimated as " + estimator(m);
  if (m == "partial") {
    const std::string basis = connect.value("partial_basis", "ledoit_wolf");
    if (basis == "ledoit_wolf") s += " (" + w.cite("Ledoit & Wolf 2004") + ")";
    if (basis == "oas") s += " (" + w.cite("Chen et al. 2010") + ")";
    if (basis == "shrinkage_correlation") s += " (" + w.cite("Schafer & Strimmer 2005") + ")";
  }
  if (connect.value("fisher_z", false)) s += ", Fisher z-transformed";
  return s + ".";
}

std::string topology(const Json& sweep, std::size_t regions, Writer& w) {
  const std::string weights = sweep.value("weights", "positive");
  std::string s = "Each matrix defined a weighted graph on its " + std::to_string(regions) + " regions (edge weight: " +
                  (weights == "positive" ? "the connectivity value, negative values never entering"
                   : weights == "absolute" ? "the absolute connectivity value"
                                           : "the negated connectivity value") +
                  "). Edges were added in decreasing weight, and at every edge density from 0 to " +
                  fmt(sweep.value("max_density", 0.0)) + " in steps of " + fmt(sweep.value("grid", 0.0)) +
                  " the clique complex of the graph was formed. Its simplices were counted exactly and the Euler "
                  "characteristic chi was computed as their alternating sum; the densities where chi changes sign "
                  "(linear interpolation between grid points) were taken as topological transitions.";
  const Json homology = sweep.value("homology", Json());
  if (homology.is_object())
    s += " Betti numbers up to dimension " + std::to_string(homology.value("max_dimension", 1)) +
         " came from persistent homology of the filtration over Z/2 (" + w.cite("Edelsbrunner et al. 2002") + "; " +
         w.cite("Zomorodian & Carlsson 2005") + "), computed by persistent cohomology with clearing (" + w.cite("Bauer 2021") + ").";
  const Json curvature = sweep.value("curvature", Json());
  if (curvature.is_object()) {
    s += " Node curvature of the clique complex (" + w.cite("Knill 2011") + ") was computed at every density";
    if (curvature.value("forman", false)) s += ", with the Forman-Ricci edge curvature (" + w.cite("Sreejith et al. 2016") + ")";
    s += ".";
  }
  const Json transitions = sweep.value("transitions", Json::object());
  if (transitions.value("random_graph", false))
    s += " The Erdos-Renyi expectation of chi at the same density (" + w.cite("Erdos & Renyi 1960") + ") is shown for reference.";
  return s;
}

std::string nulls(const Json& null, Writer& w) {
  const std::string model = null.value("model", "none");
  if (model == "none") return "";
  const int count = null.value("count", 0);
  std::string s = "Each subject's first transition was compared with " + std::to_string(count) + " draws of a null model: ";
  if (model == "phase_multivariate")
    s += "phase-randomised surrogate series with the same random phases in every region, which keep all cross-spectra (" +
         w.cite("Theiler et al. 1992") + "; " + w.cite("Prichard & Theiler 1994") + ")";
  else if (model == "phase_independent")
    s += "surrogate series with independent random phases per region, which remove coupling (" + w.cite("Theiler et al. 1992") + ")";
  else if (model == "iaaft")
    s += "iterated amplitude-adjusted Fourier transform surrogates (" + w.cite("Schreiber & Schmitz 1996") + ")";
  else if (model == "rewire")
    s += "degree-preserving rewirings of the graph at every density (" + w.cite("Maslov & Sneppen 2002") + ")";
  else if (model == "rewire_nested")
    s += "nested degree-preserving rewirings of the whole filtration, with edge swaps only between edges entering in "
         "the same density step, so every node keeps its degree at every density and the null graphs grow like the "
         "observed ones (swaps as in " + w.cite("Maslov & Sneppen 2002") + ")";
  else
    s += model;
  if (model.rfind("rewire", 0) != 0) s += ", each cleaned, filtered, estimated and swept exactly like the original";
  const int min_z = null.value("min_draws_for_z", 100);
  s += ". The observed value is reported as its mid-rank percentile among the draws (resolution 1/" +
       std::to_string(count + 1) + ")";
  s += count >= min_z ? " and as a z-score against the draws' mean and standard deviation."
                      : "; with fewer than " + std::to_string(min_z) + " draws no z-score is reported.";
  return s;
}

std::string statistics(const Comparison& c, Writer& w) {
  const auto& o = c.options;
  std::string groups;
  for (std::size_t g = 0; g < c.groups.size(); ++g)
    groups += (g == 0 ? "" : g + 1 == c.groups.size() ? " and " : ", ") + c.groups[g].name + " (n = " +
              std::to_string(c.groups[g].subjects.size()) + ")";
  std::string s = "Groups " + groups + " were compared";
  if (c.groups.size() > 2) s += ", each later group against " + c.groups[0].name;
  s += ". Per-subject summaries were tested with two-sided permutation tests of the " +
       std::string(o.statistic == "mean_difference" ? "difference in means" : o.statistic == "welch_t" ? "Welch t statistic" : "Student t statistic") +
       ", enumerating every relabelling when there were at most " + std::to_string(o.exact_limit) + " and otherwise drawing " +
       std::to_string(o.resamples) + " random relabellings (seed " + std::to_string(o.seed) + "; p-values as in " +
       w.cite("Phipson & Smyth 2010") + ")";
  if (!o.covariates.empty()) {
    std::string cov;
    for (const auto& name : o.covariates) cov += (cov.empty() ? "" : ", ") + name;
    s += "; " + cov + " " + (o.covariates.size() > 1 ? "were" : "was") +
         " regressed out of each summary first (ordinary least squares, pooled over the groups), and group means adjusted "
         "to the covariates' mean are reported beside the raw means";
  }
  char level[16];
  std::snprintf(level, sizeof level, "%g%%", 100.0 * o.confidence);
  s += ". Effect sizes are Hedges g (" + w.cite("Hedges 1981") + ") with " + level +
       " confidence intervals from the normal approximation of " + w.cite("Hedges & Olkin 1985") +
       ". p-values were adjusted for the false discovery rate across all tests of the table (" +
       w.cite("Benjamini & Hochberg 1995") + "). Group mean curves carry " + level +
       " percentile bootstrap bands from " + std::to_string(o.resamples) + " resamples of subjects (" +
       w.cite("Efron & Tibshirani 1993") + ").";
  if (!c.clusters.empty()) {
    std::string curves;
    for (const auto& name : o.cluster_curves) curves += (curves.empty() ? "" : ", ") + name;
    s += " Whole curves (" + curves + ") were compared along the density axis with a cluster-based permutation test of "
         "pointwise t statistics, thresholded at the two-sided 5% quantile of Student's t (" +
         w.cite("Maris & Oostenveld 2007") + ").";
  }
  return s;
}

}  // namespace

MethodsText methods_text(const Comparison& c) {
  Writer w;
  const Json prov = c.provenance.is_object() ? c.provenance : Json::object();
  const Json resolved = prov.value("config_resolved", Json::object());
  if (resolved.contains("connect")) w.out.paragraphs.push_back(signals(resolved["connect"], w));
  if (resolved.contains("sweep")) w.out.paragraphs.push_back(topology(resolved["sweep"], c.regions, w));
  if (resolved.contains("null")) {
    const std::string n = nulls(resolved["null"], w);
    if (!n.empty()) w.out.paragraphs.push_back(n);
  }
  w.out.paragraphs.push_back(statistics(c, w));
  w.out.paragraphs.push_back(std::string("Analyses used critplex ") + CRITPLEX_VERSION_STRING +
                             " (research software, not a medical device; no clinical decisions).");
  std::sort(w.out.references.begin(), w.out.references.end());  // by first author, as reference lists are
  return w.out;
}

std::string methods_markdown(const MethodsText& t) {
  std::string md = "# Methods\n\n";
  for (const auto& p : t.paragraphs) md += p + "\n\n";
  md += "## References\n\n";
  for (const auto& r : t.references) md += "- " + r + "\n";
  md += "\nGenerated by critplex from the resolved configuration of this comparison; check it against your own "
        "analysis before use.\n";
  return md;
}

}  // namespace critplex::pipeline
