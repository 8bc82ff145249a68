// The cohort report: one self-contained HTML document (inline CSS and SVG, no scripts,
// no external fonts or files) built from value types, so the caller decides where it
// goes (core/io writes files). Plots use the Okabe-Ito colour-blind-safe palette and,
// for grey-scale print, a distinct dash pattern and marker shape per group.
// Research software: the report says so; it supports no clinical decision.
#pragma once

#include <limits>
#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace critplex::report {

// --- plot primitives --------------------------------------------------------------------

// One line on a plot, optionally with a band (lower/upper empty: no band). Non-finite y
// values break the line (e.g. log|chi| where chi = 0).
struct Line {
  std::string label;
  std::vector<double> x, y, lower, upper;
  int style = 0;   // index into the palette (colour, dash, marker)
  bool markers = true;
  std::vector<std::vector<double>> traces;  // thin curves drawn behind (e.g. one per subject), on x
  std::vector<double> zero_x;  // x where the value is undefined because it is 0 (log panel): open markers on the lower edge
};

// A shaded range of x (e.g. a significant cluster), labelled at the top of the panel.
struct Shade {
  double x0 = 0.0, x1 = 0.0;
  std::string label;
};

struct VerticalMark {
  double x = 0.0;
  std::string label;
  int style = 0;
};

struct LinePlot {
  std::string title, x_label, y_label;  // labels carry units, e.g. "edge density (fraction of pairs)"
  std::vector<Line> lines;
  std::vector<VerticalMark> marks;
  std::vector<Shade> shades;
  std::string caption;  // one line under the plot
};

// A histogram of a permutation null with the observed statistic marked.
struct HistogramPlot {
  std::string title, x_label, note;
  std::vector<double> edges;   // bins + 1
  std::vector<double> counts;  // per bin
  double observed = 0.0;
};

// Points per group along a vertical axis, with a median and quartile box.
struct StripGroup {
  std::string label;
  std::vector<double> values;
  int style = 0;
};

struct StripPlot {
  std::string title, y_label, note;  // note: e.g. the test result, printed under the plot
  std::vector<StripGroup> groups;
};

std::string svg_line_plot(const LinePlot& plot);
std::string svg_strip_plot(const StripPlot& plot);
std::string svg_histogram(const HistogramPlot& plot);

// Ticks at 1, 2 or 5 times a power of ten covering [lo, hi] (about `target` of them).
std::vector<double> nice_ticks(double lo, double hi, int target = 6);
// HTML text with &, <, >, " and ' escaped.
std::string escape(const std::string& text);

// --- the cohort report ------------------------------------------------------------------

struct Band {
  std::vector<double> mean, lower, upper;  // on the group's density grid
};

struct GroupResults {
  std::string name;
  std::vector<std::string> subjects;     // ids, in the order of first_transition
  std::vector<double> density;           // grid of the mean curves
  Band chi, log_abs_chi;                 // log_abs_chi: log10 |chi|
  std::vector<Band> betti;               // beta_0, beta_1, ... (may be empty)
  std::vector<double> first_transition;  // per subject: density of the first chi zero (NaN: none)
  std::vector<double> transition_z;      // per subject: z against the null (empty: no null; NaN: too few draws)
  std::vector<double> transition_percentile;  // per subject: percentile rank among the null draws (empty: none)
  std::vector<double> curvature_at_transition;  // per subject: SD of node curvature at the first transition
  std::vector<std::vector<double>> subject_chi;  // per subject chi on the density grid (thin curves; may be empty)
};

struct NullBaseline {
  std::string label;  // e.g. "Erdos-Renyi expectation, N = 90"
  std::vector<double> density, chi, log_abs_chi;
};

struct TestRow {
  std::string summary;     // e.g. "first transition density"
  std::string statistic;   // e.g. "mean difference"
  double value = 0.0;
  double hedges_g = 0.0;
  double p_value = 1.0;
  double p_adjusted = 1.0; // Benjamini-Hochberg across the table
  std::string method;      // e.g. "exact, 184756 relabellings" or "Monte Carlo, 9999, seed 1"
  double g_lower = std::numeric_limits<double>::quiet_NaN();  // interval of hedges_g (NaN: none)
  double g_upper = std::numeric_limits<double>::quiet_NaN();
};

// A plain table of text cells (n/a already written for missing values).
struct Table {
  std::vector<std::string> header;
  std::vector<std::vector<std::string>> rows;
};

struct ReportInput {
  std::string title = "Cohort topology report";
  std::string software;  // e.g. "critplex 0.1.0"
  std::string created;   // date and time, supplied by the caller (core has no clock)
  std::vector<std::pair<std::string, std::string>> facts;  // cohort and option summary rows
  std::string options_json;  // the options as given, shown verbatim
  std::vector<GroupResults> groups;
  std::optional<NullBaseline> null_baseline;
  std::vector<TestRow> tests;
  std::string transition_test_note;  // shown under the strip plot of first transitions
  std::string z_test_note, rank_test_note, curvature_test_note;  // under the other strip plots
  std::vector<std::string> warnings; // shown in a box at the top (e.g. too few null draws)
  std::vector<Shade> chi_clusters;   // cluster ranges of the chi test to shade (with their p-values)
  std::string cluster_note;          // how the clusters were tested
  std::vector<HistogramPlot> null_histograms;  // headline tests
  std::vector<std::string> test_notes;  // under the tests table: family, covariate model, effect-size method
  // Provenance and quality (empty: not shown).
  std::string config_given_json, config_resolved_json;
  std::vector<std::pair<std::string, std::string>> versions;
  Table checksums;  // subject, file, SHA-256
  Table quality;    // one row per subject
  std::string methods_text;  // the methods paragraph (plain text, paragraphs separated by blank lines)
  // Study design tests (compare's "design"; empty: not shown): one row per measure and term.
  std::string design_title;
  Table design_tests;
  std::vector<std::string> design_notes;
  std::vector<LinePlot> design_plots;  // e.g. each person's two sessions joined by a line
};

// Checks shapes (errors name the group and curve) and returns the whole HTML document.
std::string build_report(const ReportInput& input);

}  // namespace critplex::report
