// Unit checks of the report: one self-contained HTML document, every section present,
// text escaped, shapes checked with messages naming the group and curve.
#include <catch2/catch.hpp>

#include <cmath>

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
  // chi, log|chi|, beta_0, beta_1, three strip plots (transitions, curvature; no z given: two)
  CHECK(count(html, "<svg ") == 6);
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
