// Unit checks of the report: one self-contained HTML document, every section present,
// text escaped, shapes checked with messages naming the group and curve.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <string>
#include <vector>

#include "base/error.hpp"
#include "report/report.hpp"
#include "check_error.hpp"

using namespace critplex;
using namespace critplex::report;

namespace {

std::size_t count(const std::string& text, const std::string& what) {
  std::size_t n = 0;
  for (std::size_t at = text.find(what); at != std::string::npos; at = text.find(what, at + 1)) ++n;
  return n;
}

ReportInput small_input() {
  ReportInput in;
  in.software = "critplex test";
  in.facts = {{"regions", "5"}};
  in.options_json = R"({"max_density": 0.5})";
  for (int k = 0; k < 2; ++k) {
    GroupResults g;
    g.name = k == 0 ? "rested" : "deprived <b>";
    g.subjects = {"a1", "a2", "a3"};
    g.density = {0.0, 0.1, 0.2, 0.3};
    g.chi = {{5, 2, -1, 0.5}, {4.5, 1.5, -2, 0}, {5.5, 2.5, 0, 1}};
    g.log_abs_chi = {{0.7, 0.3, 0.0, NAN}, {}, {}};
    g.betti = {{{5, 3, 1, 1}, {}, {}}, {{0, 0, 2, 1}, {}, {}}};
    g.first_transition = {0.15, 0.17, NAN};
    g.curvature_at_transition = {0.1, -0.2, 0.05};
    in.groups.push_back(g);
  }
  in.null_baseline = NullBaseline{"random graph", {0.0, 0.1, 0.2, 0.3}, {5, 3, 1, -1}, {}};
  in.tests = {{"first transition", "mean difference", 0.02, 0.5, 0.04, 0.08, "exact, 20 relabellings"}};
  return in;
}

}  // namespace

TEST_CASE("the report is one self-contained HTML document", "[report]") {
  const std::string html = build_report(small_input());
  CHECK(html.rfind("<!DOCTYPE html>", 0) == 0);
  CHECK(count(html, "</html>") == 1);
  CHECK(count(html, "<script") == 0);
  CHECK(count(html, "<link") == 0);
  CHECK(count(html, "@import") == 0);
  CHECK(count(html, "url(") == 0);
  CHECK(count(html, "src=") == 0);
  // The only address is the SVG namespace name, which browsers never fetch.
  CHECK(count(html, "http") == count(html, "xmlns=\"http://www.w3.org/2000/svg\""));
  // chi, log|chi|, the null on its own, beta_0, beta_1, two strip plots (transitions,
  // curvature; no z or percentile ranks given)
  CHECK(count(html, "<svg ") == 7);
  CHECK(count(html, "not a medical device") >= 1);
}

TEST_CASE("the report escapes text and shows every group, test and the null", "[report]") {
  const std::string html = build_report(small_input());
  CHECK(count(html, "deprived <b>") == 0);
  CHECK(count(html, "deprived &lt;b&gt;") > 3);
  CHECK(count(html, "random graph") == 1);  // the legend of the chi plot (no log curve given)
  CHECK(count(html, "exact, 20 relabellings") == 1);
  CHECK(count(html, "1 without a value") == 2);  // a subject without a transition, per group
  CHECK(count(html, "&quot;max_density&quot;") == 1);
}

TEST_CASE("figures: the null apart, zero points, subject curves, clusters, null histograms", "[report]") {
  ReportInput in = small_input();
  for (auto& g : in.groups) g.subject_chi = {{5, 2, -1, 0}, {5, 1, 0, 1}, {5, 3, -2, 0.5}};
  in.groups[0].chi.mean = {5, 2, 0, 0.5};  // a zero mean at density 0.2: log10|chi| undefined there
  in.chi_clusters = {{0.1, 0.2, "p = 0.012"}};
  in.null_histograms = {{"first transition: b vs a", "mean difference", "p = 0.04", {-1, 0, 1}, {3, 5}, 0.7}};
  in.warnings = {"too few null draws"};
  const std::string html = build_report(in);
  // The null model has its own panel; the group chi plot does not carry it.
  const auto null_panel = html.find("id=\"null-curve\"");
  REQUIRE(null_panel != std::string::npos);
  CHECK(html.find("random graph") > null_panel);
  CHECK(count(html, "class=\"trace\"") == 6);       // 3 subjects x 2 groups, behind the means
  CHECK(count(html, "class=\"zero-point\"") == 1);  // group 0's zero at density 0.2 on the log panel
  CHECK(count(html, "undefined") >= 1);  // the caption says why the log line breaks
  CHECK(count(html, "class=\"shade\"") == 1);
  CHECK(count(html, "p = 0.012") == 1);
  CHECK(count(html, "Permutation nulls of the headline tests") == 1);
  CHECK(count(html, "observed 0.7") == 1);
  CHECK(count(html, "too few null draws") == 1);
  CHECK(count(html, "<script") == 0);
  // The histogram's bars: one per bin; the shapes are checked.
  in.null_histograms[0].edges = {0, 1};
  CHECK_THROWS_AS(build_report(in), Error);
}

// WCAG 2.1 relative luminance of "#rrggbb" (W3C open standard, sRGB linearisation).
double luminance(const std::string& hex) {
  auto channel = [&](int at) {
    const double c = std::stoi(hex.substr(static_cast<std::size_t>(at), 2), nullptr, 16) / 255.0;
    return c <= 0.04045 ? c / 12.92 : std::pow((c + 0.055) / 1.055, 2.4);
  };
  return 0.2126 * channel(1) + 0.7152 * channel(3) + 0.0722 * channel(5);
}
double contrast(double a, double b) { return (std::max(a, b) + 0.05) / (std::min(a, b) + 0.05); }

TEST_CASE("palette: 3:1 against the white plot area, first two groups apart in lightness", "[report]") {
  // reference: WCAG 2.1 (W3C), relative luminance and contrast ratio; 3:1 is its
  // minimum for graphical objects (success criterion 1.4.11).
  ReportInput in = small_input();
  for (int k = 2; k < 6; ++k) {
    GroupResults g = in.groups[0];
    g.name = "group" + std::to_string(k);
    in.groups.push_back(g);
  }
  const std::string html = build_report(in);
  std::vector<std::string> colours;
  for (std::size_t at = html.find("class=\"legend\""); colours.size() < 6 && at != std::string::npos;) {
    const std::size_t stroke = html.rfind("<line", at);
    const std::size_t c = html.find("stroke=\"#", stroke);
    colours.push_back(html.substr(c + 8, 7));
    at = html.find("class=\"legend\"", at + 1);
  }
  REQUIRE(colours.size() == 6);
  for (const auto& c : colours) CHECK(contrast(luminance(c), 1.0) >= 3.0);
  CHECK(contrast(luminance(colours[0]), luminance(colours[1])) >= 2.0);
}

TEST_CASE("a NaN breaks a line instead of drawing through it", "[report]") {
  LinePlot p{"t", "x (units)", "y (units)", {Line{"l", {0, 1, 2, 3, 4}, {1, 2, NAN, 3, 4}, {}, {}, 0, false}}, {}};
  const std::string svg = svg_line_plot(p);
  // The drawing of the line: <path d="M..." fill="none" (plain search: std::regex trips
  // a false -Wmaybe-uninitialized in GCC 12's own headers under the sanitizer build).
  const std::string open = "<path d=\"M";
  const std::size_t start = svg.find(open);
  REQUIRE(start != std::string::npos);
  const std::size_t end = svg.find('"', start + open.size());
  REQUIRE(end != std::string::npos);
  const std::string after = "\" fill=\"none\"";
  REQUIRE(svg.compare(end, after.size(), after) == 0);
  const std::string d = svg.substr(start + open.size() - 1, end - (start + open.size() - 1));
  CHECK(count(d, "M") == 2);
  CHECK(count(d, "L") == 2);
}

TEST_CASE("shape errors name the group and the curve", "[report]") {
  auto in = small_input();
  in.groups[1].chi.mean.pop_back();
  CHECK_ERROR_KIND_WITH(build_report(in), ErrorKind::argument, Catch::Contains("deprived <b>") && Catch::Contains("chi mean"));
  in = small_input();
  in.groups[0].first_transition.push_back(0.2);
  CHECK_ERROR_KIND_WITH(build_report(in), ErrorKind::argument, Catch::Contains("first transitions"));
  CHECK_ERROR_KIND(build_report(ReportInput{}), ErrorKind::argument);
}

TEST_CASE("ticks are round numbers covering the range", "[report]") {
  // Common practice for axis ticks: steps of 1, 2 or 5 times a power of ten.
  const auto t = nice_ticks(0.0, 0.5, 6);
  REQUIRE(t.size() == 6);
  CHECK(t.front() == 0.0);
  CHECK(t[1] == Approx(0.1));
  CHECK(t.back() == Approx(0.5));
  CHECK(nice_ticks(-47.0, 52.0, 6) == std::vector<double>{-40, -20, 0, 20, 40});
  CHECK(nice_ticks(1.0, 1.0).empty());
  CHECK(escape("a<b & 'c'") == "a&lt;b &amp; &#39;c&#39;");
}
