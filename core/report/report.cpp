#include "report/report.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>
#include <sstream>

#include "base/error.hpp"
#include "base/numeric.hpp"

namespace critplex::report {

namespace {

// Our own palette, picked for colour-vision deficiency: the first two groups (the usual
// comparison) pair a dark blue with an ochre, so they differ in lightness as well as hue
// and stay apart for red-green and blue-yellow deficiency and in grey; every colour keeps
// a 3:1 contrast with the white plot area (WCAG 2.1 non-text contrast); every group also
// has its own dash pattern and marker shape.
struct Style {
  const char* colour;
  const char* dash;  // "" = solid
  const char* marker;
};
constexpr Style kStyles[] = {
    {"#1b4f8c", "", "circle"},        {"#b8780c", "8 4", "triangle"},   {"#7a3b69", "2 3", "square"},
    {"#2f8a87", "9 3 2 3", "diamond"}, {"#a8402c", "4 2", "cross"},    {"#2e2e2e", "12 3 2 3 2 3", "none"},
};
const Style& style_of(int index) {
  const int n = static_cast<int>(sizeof kStyles / sizeof kStyles[0]);
  return kStyles[((index % n) + n) % n];
}

std::string num(double v, int digits = 4) {
  if (std::isnan(v)) return "n/a";
  char buffer[64];
  std::snprintf(buffer, sizeof buffer, "%.*g", digits, v);
  return buffer;
}
std::string coord(double v) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.2f", v);
  return buffer;
}

std::string marker_svg(const Style& s, double x, double y, double r = 3.6) {
  const std::string fill = " fill=\"" + std::string(s.colour) + "\" stroke=\"#ffffff\" stroke-width=\"0.8\"";
  const std::string m = s.marker;
  if (m == "circle") return "<circle cx=\"" + coord(x) + "\" cy=\"" + coord(y) + "\" r=\"" + coord(r) + "\"" + fill + "/>";
  if (m == "square")
    return "<rect x=\"" + coord(x - r) + "\" y=\"" + coord(y - r) + "\" width=\"" + coord(2 * r) + "\" height=\"" +
           coord(2 * r) + "\"" + fill + "/>";
  if (m == "triangle")
    return "<path d=\"M" + coord(x) + "," + coord(y - 1.2 * r) + "L" + coord(x + 1.1 * r) + "," + coord(y + 0.8 * r) + "L" +
           coord(x - 1.1 * r) + "," + coord(y + 0.8 * r) + "Z\"" + fill + "/>";
  if (m == "diamond")
    return "<path d=\"M" + coord(x) + "," + coord(y - 1.3 * r) + "L" + coord(x + r) + "," + coord(y) + "L" + coord(x) + "," +
           coord(y + 1.3 * r) + "L" + coord(x - r) + "," + coord(y) + "Z\"" + fill + "/>";
  if (m == "cross")
    return "<path d=\"M" + coord(x - r) + "," + coord(y - r) + "L" + coord(x + r) + "," + coord(y + r) + "M" + coord(x - r) +
           "," + coord(y + r) + "L" + coord(x + r) + "," + coord(y - r) + "\" stroke=\"" + s.colour +
           "\" stroke-width=\"2\" fill=\"none\"/>";
  return "";
}

std::string dash_attr(const Style& s) { return *s.dash ? " stroke-dasharray=\"" + std::string(s.dash) + "\"" : ""; }

struct Frame {
  double width = 660, height = 400, left = 74, right = 18, top = 62, bottom = 58;
  double x0 = 0, x1 = 1, y0 = 0, y1 = 1;
  double px(double x) const { return left + (x - x0) / (x1 - x0) * (width - left - right); }
  double py(double y) const { return height - bottom - (y - y0) / (y1 - y0) * (height - top - bottom); }
};

void expand(double& lo, double& hi) {
  if (!(lo < hi)) {
    const double c = std::isfinite(lo) ? lo : 0.0;
    lo = c - 1.0;
    hi = c + 1.0;
    return;
  }
  const double pad = 0.04 * (hi - lo);
  lo -= pad;
  hi += pad;
}

std::string svg_open(const Frame& f, const std::string& title) {
  return "<svg xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 " + coord(f.width) + " " + coord(f.height) +
         "\" role=\"img\" aria-label=\"" + escape(title) + "\" class=\"plot\">\n<text x=\"" + coord(f.left) +
         "\" y=\"22\" class=\"plot-title\">" + escape(title) + "</text>\n";
}

std::string axes(const Frame& f, const std::string& x_label, const std::string& y_label) {
  std::ostringstream s;
  const double bottom = f.height - f.bottom, right = f.width - f.right;
  s << "<rect x=\"" << coord(f.left) << "\" y=\"" << coord(f.top) << "\" width=\"" << coord(right - f.left)
    << "\" height=\"" << coord(bottom - f.top) << "\" class=\"plot-area\"/>\n";
  for (double t : nice_ticks(f.x0, f.x1)) {
    const double x = f.px(t);
    s << "<line x1=\"" << coord(x) << "\" y1=\"" << coord(f.top) << "\" x2=\"" << coord(x) << "\" y2=\"" << coord(bottom)
      << "\" class=\"grid\"/><line x1=\"" << coord(x) << "\" y1=\"" << coord(bottom) << "\" x2=\"" << coord(x) << "\" y2=\""
      << coord(bottom + 5) << "\" class=\"tick\"/><text x=\"" << coord(x) << "\" y=\"" << coord(bottom + 18)
      << "\" class=\"tick-label\" text-anchor=\"middle\">" << num(t) << "</text>\n";
  }
  for (double t : nice_ticks(f.y0, f.y1)) {
    const double y = f.py(t);
    s << "<line x1=\"" << coord(f.left) << "\" y1=\"" << coord(y) << "\" x2=\"" << coord(right) << "\" y2=\"" << coord(y)
      << "\" class=\"grid\"/><line x1=\"" << coord(f.left - 5) << "\" y1=\"" << coord(y) << "\" x2=\"" << coord(f.left)
      << "\" y2=\"" << coord(y) << "\" class=\"tick\"/><text x=\"" << coord(f.left - 8) << "\" y=\"" << coord(y + 4)
      << "\" class=\"tick-label\" text-anchor=\"end\">" << num(t) << "</text>\n";
  }
  s << "<line x1=\"" << coord(f.left) << "\" y1=\"" << coord(bottom) << "\" x2=\"" << coord(right) << "\" y2=\""
    << coord(bottom) << "\" class=\"axis\"/><line x1=\"" << coord(f.left) << "\" y1=\"" << coord(f.top) << "\" x2=\""
    << coord(f.left) << "\" y2=\"" << coord(bottom) << "\" class=\"axis\"/>\n";
  s << "<text x=\"" << coord((f.left + right) / 2) << "\" y=\"" << coord(f.height - 12)
    << "\" class=\"axis-label\" text-anchor=\"middle\">" << escape(x_label) << "</text>\n";
  s << "<text transform=\"translate(16," << coord((f.top + bottom) / 2) << ") rotate(-90)\" class=\"axis-label\" "
    << "text-anchor=\"middle\">" << escape(y_label) << "</text>\n";
  return s.str();
}

// Legend entries in a row under the title: a line sample in the style plus its marker.
std::string legend(const Frame& f, const std::vector<std::pair<std::string, std::pair<int, bool>>>& entries) {
  std::ostringstream s;
  double x = f.left;
  const double y = 44;
  for (const auto& [label, look] : entries) {
    const Style& st = style_of(look.first);
    s << "<line x1=\"" << coord(x) << "\" y1=\"" << coord(y) << "\" x2=\"" << coord(x + 26) << "\" y2=\"" << coord(y)
      << "\" stroke=\"" << st.colour << "\" stroke-width=\"2.2\"" << dash_attr(st) << "/>";
    if (look.second) s << marker_svg(st, x + 13, y);
    s << "<text x=\"" << coord(x + 32) << "\" y=\"" << coord(y + 4) << "\" class=\"legend\">" << escape(label) << "</text>\n";
    x += 44 + 6.4 * static_cast<double>(label.size());
  }
  return s.str();
}

void check_lengths(const std::string& what, std::size_t expected, std::size_t got) {
  if (got != expected)
    fail(ErrorKind::argument, "report: " + what + " has " + std::to_string(got) + " values, expected " + std::to_string(expected));
}

}  // namespace

std::string escape(const std::string& text) {
  std::string out;
  out.reserve(text.size());
  for (char c : text) {
    switch (c) {
      case '&': out += "&amp;"; break;
      case '<': out += "&lt;"; break;
      case '>': out += "&gt;"; break;
      case '"': out += "&quot;"; break;
      case '\'': out += "&#39;"; break;
      default: out += c;
    }
  }
  return out;
}

std::vector<double> nice_ticks(double lo, double hi, int target) {
  std::vector<double> ticks;
  if (!(std::isfinite(lo) && std::isfinite(hi)) || !(hi > lo) || target < 2) return ticks;
  const double raw = (hi - lo) / target;
  const double power = std::pow(10.0, std::floor(std::log10(raw)));
  double step = power;
  for (double m : {1.0, 2.0, 5.0, 10.0})
    if (m * power >= raw) {
      step = m * power;
      break;
    }
  for (double t = std::ceil(lo / step) * step; t <= hi + 1e-9 * step; t += step)
    ticks.push_back(std::fabs(t) < 1e-12 * step ? 0.0 : t);
  return ticks;
}

std::string svg_line_plot(const LinePlot& plot) {
  Frame f;
  double xlo = std::numeric_limits<double>::infinity(), xhi = -xlo, ylo = xlo, yhi = -xlo;
  for (const auto& line : plot.lines) {
    check_lengths("line '" + line.label + "' y", line.x.size(), line.y.size());
    if (!line.lower.empty()) check_lengths("line '" + line.label + "' lower band", line.x.size(), line.lower.size());
    if (!line.upper.empty()) check_lengths("line '" + line.label + "' upper band", line.x.size(), line.upper.size());
    for (std::size_t i = 0; i < line.x.size(); ++i) {
      if (!std::isfinite(line.x[i])) continue;
      xlo = std::min(xlo, line.x[i]);
      xhi = std::max(xhi, line.x[i]);
      for (const auto* v : {&line.y, &line.lower, &line.upper})
        if (i < v->size() && std::isfinite((*v)[i])) {
          ylo = std::min(ylo, (*v)[i]);
          yhi = std::max(yhi, (*v)[i]);
        }
      for (const auto& trace : line.traces)
        if (i < trace.size() && std::isfinite(trace[i])) ylo = std::min(ylo, trace[i]), yhi = std::max(yhi, trace[i]);
    }
  }
  if (!std::isfinite(xlo)) xlo = 0, xhi = 1;
  if (!std::isfinite(ylo)) ylo = 0, yhi = 1;
  if (!(xhi > xlo)) xhi = xlo + 1;
  expand(ylo, yhi);
  f.x0 = xlo;
  f.x1 = xhi;
  f.y0 = ylo;
  f.y1 = yhi;

  std::ostringstream s;
  s << svg_open(f, plot.title) << axes(f, plot.x_label, plot.y_label);
  s << "<g clip-path=\"none\">\n";
  // Shaded ranges (significant clusters) under everything, labelled at the top.
  for (const auto& shade : plot.shades) {
    const double a = f.px(std::max(f.x0, shade.x0)), b = f.px(std::min(f.x1, shade.x1));
    const double w = std::max(3.0, b - a);
    s << "<rect x=\"" << coord(a - (w - (b - a)) / 2) << "\" y=\"" << coord(f.top) << "\" width=\"" << coord(w)
      << "\" height=\"" << coord(f.height - f.bottom - f.top) << "\" class=\"shade\"/><text x=\"" << coord(a + 2)
      << "\" y=\"" << coord(f.height - f.bottom - 6) << "\" class=\"shade-label\">" << escape(shade.label) << "</text>\n";
  }
  // Thin curves (one per subject) behind the bands and means.
  for (const auto& line : plot.lines) {
    const Style& st = style_of(line.style);
    for (const auto& trace : line.traces) {
      std::string d;
      bool pen_down = false;
      for (std::size_t i = 0; i < line.x.size() && i < trace.size(); ++i) {
        if (!std::isfinite(line.x[i]) || !std::isfinite(trace[i])) {
          pen_down = false;
          continue;
        }
        d += (pen_down ? "L" : "M") + coord(f.px(line.x[i])) + "," + coord(f.py(trace[i]));
        pen_down = true;
      }
      if (!d.empty())
        s << "<path d=\"" << d << "\" fill=\"none\" stroke=\"" << st.colour
          << "\" stroke-width=\"0.8\" stroke-opacity=\"0.38\" class=\"trace\"/>\n";
    }
  }
  // Bands first, so every line stays on top of every band.
  for (const auto& line : plot.lines) {
    if (line.lower.empty() || line.upper.empty()) continue;
    const Style& st = style_of(line.style);
    std::string upper, lower;
    std::size_t i = 0;
    while (i < line.x.size()) {  // one polygon per run of finite points
      std::vector<std::size_t> run;
      for (; i < line.x.size() && std::isfinite(line.lower[i]) && std::isfinite(line.upper[i]) && std::isfinite(line.x[i]); ++i)
        run.push_back(i);
      if (run.size() >= 2) {
        std::string d = "M";
        for (std::size_t k = 0; k < run.size(); ++k)
          d += (k ? "L" : "") + coord(f.px(line.x[run[k]])) + "," + coord(f.py(line.upper[run[k]]));
        for (std::size_t k = run.size(); k-- > 0;) d += "L" + coord(f.px(line.x[run[k]])) + "," + coord(f.py(line.lower[run[k]]));
        s << "<path d=\"" << d << "Z\" fill=\"" << st.colour << "\" fill-opacity=\"0.16\" stroke=\"" << st.colour
          << "\" stroke-opacity=\"0.55\" stroke-width=\"0.7\"" << dash_attr(st) << "/>\n";
      }
      if (run.empty()) ++i;
    }
  }
  std::size_t mark_row = 0;  // labels stacked so close marks stay readable
  for (const auto& mark : plot.marks) {
    if (!std::isfinite(mark.x) || mark.x < f.x0 || mark.x > f.x1) continue;
    const double label_y = f.top + 12 + 13 * static_cast<double>(mark_row++);
    const Style& st = style_of(mark.style);
    const double x = f.px(mark.x);
    s << "<line x1=\"" << coord(x) << "\" y1=\"" << coord(f.top) << "\" x2=\"" << coord(x) << "\" y2=\""
      << coord(f.height - f.bottom) << "\" stroke=\"" << st.colour << "\" stroke-width=\"1.3\" stroke-dasharray=\"1 3\"/>"
      << "<text x=\"" << coord(x + 3) << "\" y=\"" << coord(label_y) << "\" class=\"mark-label\" fill=\"" << st.colour
      << "\">" << escape(mark.label) << "</text>\n";
  }
  for (const auto& line : plot.lines) {
    const Style& st = style_of(line.style);
    std::string d;
    bool pen_down = false;
    for (std::size_t i = 0; i < line.x.size(); ++i) {
      if (!std::isfinite(line.x[i]) || !std::isfinite(line.y[i])) {
        pen_down = false;
        continue;
      }
      d += (pen_down ? "L" : "M") + coord(f.px(line.x[i])) + "," + coord(f.py(line.y[i]));
      pen_down = true;
    }
    if (!d.empty())
      s << "<path d=\"" << d << "\" fill=\"none\" stroke=\"" << st.colour << "\" stroke-width=\"2.2\"" << dash_attr(st)
        << " stroke-linejoin=\"round\"/>\n";
    if (line.markers) {
      const std::size_t every = std::max<std::size_t>(1, line.x.size() / 10);
      for (std::size_t i = 0; i < line.x.size(); i += every)
        if (std::isfinite(line.x[i]) && std::isfinite(line.y[i])) s << marker_svg(st, f.px(line.x[i]), f.py(line.y[i]));
      s << "\n";
    }
    // Points where the value is undefined because it is zero: open markers on the lower edge.
    for (double x : line.zero_x)
      if (std::isfinite(x) && x >= f.x0 && x <= f.x1)
        s << "<circle cx=\"" << coord(f.px(x)) << "\" cy=\"" << coord(f.height - f.bottom - 4) << "\" r=\"3.4\" fill=\"#ffffff\" stroke=\""
          << st.colour << "\" stroke-width=\"1.6\" class=\"zero-point\"/>";
  }
  s << "</g>\n";
  std::vector<std::pair<std::string, std::pair<int, bool>>> entries;
  for (const auto& line : plot.lines) entries.push_back({line.label, {line.style, line.markers}});
  s << legend(f, entries) << "</svg>\n";
  if (!plot.caption.empty()) s << "<p class=\"plot-note\">" << escape(plot.caption) << "</p>\n";
  return s.str();
}

std::string svg_histogram(const HistogramPlot& plot) {
  if (plot.edges.size() != plot.counts.size() + 1 || plot.counts.empty())
    fail(ErrorKind::argument, "report: histogram '" + plot.title + "' needs bins + 1 edges");
  Frame f;
  f.height = 340;
  f.top = 40;
  f.x0 = std::min(plot.edges.front(), plot.observed);
  f.x1 = std::max(plot.edges.back(), plot.observed);
  if (!(f.x1 > f.x0)) f.x1 = f.x0 + 1.0;
  f.y0 = 0.0;
  f.y1 = 1.0;
  for (double c : plot.counts) f.y1 = std::max(f.y1, c * 1.08);
  std::ostringstream s;
  s << svg_open(f, plot.title) << axes(f, plot.x_label, "relabellings (count)");
  const Style& st = style_of(0);
  for (std::size_t k = 0; k < plot.counts.size(); ++k) {
    const double a = f.px(plot.edges[k]), b = f.px(plot.edges[k + 1]), top = f.py(plot.counts[k]);
    s << "<rect x=\"" << coord(a) << "\" y=\"" << coord(top) << "\" width=\"" << coord(std::max(0.5, b - a - 0.6))
      << "\" height=\"" << coord(f.py(0) - top) << "\" fill=\"" << st.colour << "\" fill-opacity=\"0.45\"/>";
  }
  const double x = f.px(plot.observed);
  s << "\n<line x1=\"" << coord(x) << "\" y1=\"" << coord(f.top) << "\" x2=\"" << coord(x) << "\" y2=\""
    << coord(f.height - f.bottom) << "\" stroke=\"" << style_of(4).colour << "\" stroke-width=\"2.4\"/><text x=\""
    << coord(x + 4) << "\" y=\"" << coord(f.top + 14) << "\" class=\"mark-label\" fill=\"" << style_of(4).colour
    << "\">observed " << num(plot.observed) << "</text>\n</svg>\n";
  if (!plot.note.empty()) s << "<p class=\"plot-note\">" << escape(plot.note) << "</p>\n";
  return s.str();
}

std::string svg_strip_plot(const StripPlot& plot) {
  Frame f;
  f.width = 480;
  f.height = 360;
  f.top = 40;
  double lo = std::numeric_limits<double>::infinity(), hi = -lo;
  for (const auto& g : plot.groups)
    for (double v : g.values)
      if (std::isfinite(v)) lo = std::min(lo, v), hi = std::max(hi, v);
  if (!std::isfinite(lo)) lo = 0, hi = 1;
  expand(lo, hi);
  const double n = std::max<double>(1.0, static_cast<double>(plot.groups.size()));
  f.x0 = 0;
  f.x1 = n;
  f.y0 = lo;
  f.y1 = hi;
  std::ostringstream s;
  s << svg_open(f, plot.title);
  // Axes without x ticks: the groups are categories, named under their columns.
  Frame no_x = f;
  no_x.x0 = 0;
  no_x.x1 = 0;  // nice_ticks gives nothing for an empty range
  std::string a = axes(no_x, "", plot.y_label);
  s << a;
  for (std::size_t k = 0; k < plot.groups.size(); ++k) {
    const auto& g = plot.groups[k];
    const Style& st = style_of(g.style);
    const double centre = f.left + (static_cast<double>(k) + 0.5) / n * (f.width - f.left - f.right);
    std::vector<double> finite;
    for (double v : g.values)
      if (std::isfinite(v)) finite.push_back(v);
    std::sort(finite.begin(), finite.end());
    auto quantile = [&](double q) { return quantile_sorted(finite, q); };
    if (!finite.empty()) {
      const double q1 = f.py(quantile(0.25)), q2 = f.py(quantile(0.5)), q3 = f.py(quantile(0.75));
      s << "<rect x=\"" << coord(centre - 30) << "\" y=\"" << coord(q3) << "\" width=\"60\" height=\"" << coord(q1 - q3)
        << "\" fill=\"none\" stroke=\"#555555\" stroke-width=\"1\"/><line x1=\"" << coord(centre - 34) << "\" y1=\""
        << coord(q2) << "\" x2=\"" << coord(centre + 34) << "\" y2=\"" << coord(q2)
        << "\" stroke=\"#222222\" stroke-width=\"2.4\"/>\n";
    }
    std::size_t i = 0;
    for (double v : g.values) {
      // Deterministic spread by the golden-ratio sequence, so points rarely overlap.
      const double offset = (std::fmod(static_cast<double>(i++) * 0.6180339887, 1.0) - 0.5) * 44.0;
      if (std::isfinite(v)) s << marker_svg(st, centre + offset, f.py(v), 3.8);
    }
    const std::size_t missing = g.values.size() - finite.size();
    s << "\n<text x=\"" << coord(centre) << "\" y=\"" << coord(f.height - f.bottom + 20)
      << "\" class=\"axis-label\" text-anchor=\"middle\">" << escape(g.label) << " (n = " << finite.size() << ")</text>";
    if (missing > 0)
      s << "<text x=\"" << coord(centre) << "\" y=\"" << coord(f.height - f.bottom + 36)
        << "\" class=\"tick-label\" text-anchor=\"middle\">" << missing << " without a value</text>";
    s << "\n";
  }
  s << "</svg>\n";
  if (!plot.note.empty()) s << "<p class=\"plot-note\">" << escape(plot.note) << "</p>\n";
  return s.str();
}

namespace {

const char* kCss = R"css(
:root { --ink: #1d232b; --muted: #5b6573; --rule: #d7dce3; --paper: #fbfbf8; --panel: #ffffff; }
* { box-sizing: border-box; }
body { margin: 0; background: var(--paper); color: var(--ink);
       font: 15px/1.5 system-ui, -apple-system, "Segoe UI", "Helvetica Neue", Arial, sans-serif; }
main { max-width: 1000px; margin: 0 auto; padding: 28px 22px 60px; }
header { border-left: 6px solid var(--ink); padding: 4px 0 4px 16px; margin-bottom: 26px; }
header h1 { margin: 0; font-size: 26px; letter-spacing: 0.01em; }
header p { margin: 2px 0 0; color: var(--muted); }
h2 { font-size: 19px; margin: 34px 0 10px; padding-bottom: 4px; border-bottom: 2px solid var(--ink); }
.lede { color: var(--muted); margin: 0 0 12px; }
.panel { background: var(--panel); border: 1px solid var(--rule); border-radius: 3px; padding: 10px 12px; margin: 12px 0; }
.pair { display: grid; grid-template-columns: repeat(auto-fit, minmax(420px, 1fr)); gap: 12px; }
svg.plot { width: 100%; height: auto; display: block; }
.plot-title { font-size: 15px; font-weight: 650; fill: var(--ink); }
.plot-area { fill: #ffffff; stroke: none; }
.grid { stroke: #e6e9ee; stroke-width: 1; }
.tick, .axis { stroke: #3a414b; stroke-width: 1.2; }
.tick-label { font-size: 12px; fill: #3a414b; }
.axis-label { font-size: 13px; fill: var(--ink); }
.legend { font-size: 12.5px; fill: var(--ink); }
.mark-label { font-size: 11px; paint-order: stroke; stroke: #ffffff; stroke-width: 3px; }
.plot-note { margin: 4px 0 0; font-size: 13.5px; color: var(--ink); }
table { border-collapse: collapse; width: 100%; font-size: 14px; }
th, td { text-align: left; padding: 5px 8px; border-bottom: 1px solid var(--rule); vertical-align: top; }
th { font-weight: 650; }
thead th { border-bottom: 2px solid var(--ink); }
td.n { text-align: right; font-variant-numeric: tabular-nums; }
tbody tr:nth-child(even) { background: #f3f4f1; }
pre { background: #f3f4f1; border: 1px solid var(--rule); padding: 10px; overflow-x: auto; font-size: 12.5px; }
.warning { border-left: 5px solid #8a5a00; background: #fff8e8; }
.warning ul { margin: 4px 0 0; padding-left: 20px; }
.shade { fill: #8c8c8c; fill-opacity: 0.16; }
.shade-label { font-size: 11px; fill: #333333; }
details summary { cursor: pointer; margin: 8px 0; }
#quality-table, #checksums { font-size: 12.5px; }
#checksums td { font-family: ui-monospace, Menlo, Consolas, monospace; word-break: break-all; }
footer { margin-top: 40px; color: var(--muted); font-size: 13px; border-top: 1px solid var(--rule); padding-top: 10px; }
@media print { body { background: #ffffff; } .panel { break-inside: avoid; border-color: #999999; } }
)css";

double finite_mean(const std::vector<double>& v) {
  double s = 0;
  std::size_t n = 0;
  for (double x : v)
    if (std::isfinite(x)) s += x, ++n;
  return n ? s / static_cast<double>(n) : std::numeric_limits<double>::quiet_NaN();
}

void check_band(const GroupResults& g, const Band& b, const std::string& name, bool required) {
  if (!required && b.mean.empty()) return;
  check_lengths("group '" + g.name + "', " + name + " mean", g.density.size(), b.mean.size());
  if (!b.lower.empty() || !b.upper.empty()) {
    check_lengths("group '" + g.name + "', " + name + " lower band", g.density.size(), b.lower.size());
    check_lengths("group '" + g.name + "', " + name + " upper band", g.density.size(), b.upper.size());
  }
}

Line band_line(const std::string& label, const std::vector<double>& x, const Band& b, int style) {
  return Line{label, x, b.mean, b.lower, b.upper, style, true};
}

const std::string kDensityLabel = "edge density (fraction of region pairs connected)";

std::string table_html(const Table& t, const std::string& id) {
  std::ostringstream h;
  h << "<table id=\"" << escape(id) << "\"><thead><tr>";
  for (const auto& c : t.header) h << "<th>" << escape(c) << "</th>";
  h << "</tr></thead><tbody>\n";
  for (const auto& row : t.rows) {
    h << "<tr>";
    for (const auto& c : row) h << "<td>" << escape(c) << "</td>";
    h << "</tr>\n";
  }
  h << "</tbody></table>\n";
  return h.str();
}

// Configuration as given and resolved, versions, input checksums, and per-subject quality.
std::string provenance_html(const ReportInput& in) {
  std::ostringstream h;
  if (!in.quality.rows.empty()) {
    h << "<h2 id=\"quality\">Quality per subject</h2>\n<div class=\"panel wide\">" << table_html(in.quality, "quality-table")
      << "<p class=\"lede\">Frames censored: frames the cleaning dropped before estimation. Shrinkage intensity: "
         "n/a for estimators without shrinkage. A region that is constant after cleaning stops that subject with an "
         "error (listed as failed), so no region is dropped silently.</p></div>\n";
  }
  if (in.config_given_json.empty() && in.versions.empty()) return h.str();
  h << "<h2 id=\"provenance\">Provenance</h2>\n<div class=\"panel\">";
  if (!in.versions.empty()) {
    h << "<table><tbody>\n";
    for (const auto& [k, v] : in.versions) h << "<tr><th scope=\"row\">" << escape(k) << "</th><td>" << escape(v) << "</td></tr>\n";
    h << "</tbody></table>\n";
  }
  h << "<div class=\"pair\"><div><p class=\"lede\">Configuration as given (connect, sweep, null, compare):</p><pre>"
    << escape(in.config_given_json) << "</pre></div><div><p class=\"lede\">As resolved, every default filled in:</p><pre>"
    << escape(in.config_resolved_json) << "</pre></div></div>\n";
  if (!in.checksums.rows.empty())
    h << "<details><summary>Input checksums (SHA-256, " << in.checksums.rows.size() << " files)</summary>"
      << table_html(in.checksums, "checksums") << "</details>\n";
  h << "</div>\n";
  return h.str();
}

}  // namespace

std::string build_report(const ReportInput& in) {
  if (in.groups.empty()) fail(ErrorKind::argument, "report: no groups");
  for (const auto& g : in.groups) {
    check_band(g, g.chi, "chi", true);
    check_band(g, g.log_abs_chi, "log10|chi|", false);
    for (std::size_t k = 0; k < g.betti.size(); ++k) check_band(g, g.betti[k], "beta_" + std::to_string(k), true);
    check_lengths("group '" + g.name + "', first transitions", g.subjects.size(), g.first_transition.size());
    if (!g.transition_z.empty()) check_lengths("group '" + g.name + "', transition z-scores", g.subjects.size(), g.transition_z.size());
    for (const auto& trace : g.subject_chi) check_lengths("group '" + g.name + "', a subject's chi curve", g.density.size(), trace.size());
    if (!g.transition_percentile.empty())
      check_lengths("group '" + g.name + "', transition percentile ranks", g.subjects.size(), g.transition_percentile.size());
  }
  if (in.null_baseline) {
    check_lengths("null baseline chi", in.null_baseline->density.size(), in.null_baseline->chi.size());
    if (!in.null_baseline->log_abs_chi.empty())
      check_lengths("null baseline log10|chi|", in.null_baseline->density.size(), in.null_baseline->log_abs_chi.size());
  }
  constexpr int kNullStyle = 5;

  std::ostringstream h;
  h << "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<meta name=\"viewport\" "
       "content=\"width=device-width, initial-scale=1\">\n<title>"
    << escape(in.title) << "</title>\n<style>" << kCss << "</style>\n</head>\n<body>\n<main>\n";
  h << "<header><h1>" << escape(in.title) << "</h1><p>" << escape(in.software)
    << (in.created.empty() ? "" : " &middot; " + escape(in.created))
    << " &middot; research software, not a medical device: no clinical decisions</p></header>\n";

  if (!in.warnings.empty()) {
    h << "<div class=\"panel warning\" id=\"warnings\"><strong>Read with care</strong><ul>\n";
    for (const auto& w : in.warnings) h << "<li>" << escape(w) << "</li>\n";
    h << "</ul></div>\n";
  }
  // Cohort and options.
  h << "<h2>Cohort and options</h2>\n<div class=\"panel\"><table><tbody>\n";
  for (const auto& g : in.groups)
    h << "<tr><th scope=\"row\">group " << escape(g.name) << "</th><td>" << g.subjects.size() << " subjects</td></tr>\n";
  for (const auto& [k, v] : in.facts) h << "<tr><th scope=\"row\">" << escape(k) << "</th><td>" << escape(v) << "</td></tr>\n";
  h << "</tbody></table>\n";
  if (!in.options_json.empty() && in.config_given_json.empty())
    h << "<p class=\"lede\">Options as given:</p><pre>" << escape(in.options_json) << "</pre>\n";
  h << "</div>\n";

  // Mean chi and log|chi| with bands and per-subject curves, transitions marked,
  // significant clusters shaded; the null model in its own panel (its own scale).
  std::vector<VerticalMark> marks;
  for (std::size_t k = 0; k < in.groups.size(); ++k) {
    const double m = finite_mean(in.groups[k].first_transition);
    marks.push_back({m, in.groups[k].name + " " + num(m, 3), static_cast<int>(k)});
  }
  LinePlot chi{"Euler characteristic, group mean with 95% band", kDensityLabel, "Euler characteristic chi (count)", {}, marks};
  chi.shades = in.chi_clusters;
  chi.caption = "Thin lines: each subject. Shaded: density ranges of chi clusters with p <= 0.05 (" +
                (in.cluster_note.empty() ? std::string("cluster permutation test") : in.cluster_note) + ").";
  LinePlot logchi{"log10 |chi|, group mean with 95% band", kDensityLabel, "log10 |chi| (dimensionless)", {}, marks};
  logchi.caption = "Open circles on the lower edge: grid points where the group mean chi is 0, so log10 |chi| is "
                   "undefined and the line breaks there.";
  bool any_log = false;
  for (std::size_t k = 0; k < in.groups.size(); ++k) {
    const auto& g = in.groups[k];
    Line mean_line = band_line(g.name, g.density, g.chi, static_cast<int>(k));
    mean_line.traces = g.subject_chi;
    chi.lines.push_back(std::move(mean_line));
    if (!g.log_abs_chi.mean.empty()) {
      Line log_line = band_line(g.name, g.density, g.log_abs_chi, static_cast<int>(k));
      for (std::size_t p = 0; p < g.density.size(); ++p)
        if (g.chi.mean[p] == 0.0) log_line.zero_x.push_back(g.density[p]);
      logchi.lines.push_back(std::move(log_line));
      any_log = true;
    }
  }
  h << "<h2 id=\"euler\">Euler characteristic along the filtration</h2>\n<p class=\"lede\">Bands: percentile bootstrap over "
       "subjects. Dotted verticals: each group's mean first transition (first zero of chi).</p>\n";
  h << "<div class=\"panel\">" << svg_line_plot(chi) << "</div>\n";
  if (any_log) h << "<div class=\"panel\">" << svg_line_plot(logchi) << "</div>\n";
  if (in.null_baseline) {
    const auto& nb = *in.null_baseline;
    LinePlot null_plot{"Null model: chi of the null, on its own scale", kDensityLabel, "Euler characteristic chi (count)",
                       {Line{nb.label, nb.density, nb.chi, {}, {}, kNullStyle, false}}, {}};
    null_plot.caption = "Drawn on its own axes, so its range does not set the scale of the group curves above.";
    h << "<div class=\"panel\" id=\"null-curve\">" << svg_line_plot(null_plot) << "</div>\n";
  }

  // Betti curves: one plot per dimension, groups overlaid.
  std::size_t dims = 0;
  for (const auto& g : in.groups) dims = std::max(dims, g.betti.size());
  h << "<h2>Betti curves</h2>\n";
  if (dims == 0) h << "<p class=\"lede\">Betti curves were not computed for this cohort.</p>\n";
  for (std::size_t d = 0; d < dims; ++d) {
    LinePlot p{"Betti number beta_" + std::to_string(d) + ", group mean with 95% band", kDensityLabel,
               "beta_" + std::to_string(d) + " (count)", {}, marks};
    for (std::size_t k = 0; k < in.groups.size(); ++k)
      if (d < in.groups[k].betti.size())
        p.lines.push_back(band_line(in.groups[k].name, in.groups[k].density, in.groups[k].betti[d], static_cast<int>(k)));
    h << "<div class=\"panel\">" << svg_line_plot(p) << "</div>\n";
  }

  // Subjects' first transitions and curvature at the transition.
  StripPlot first{"First transition per subject", "first chi zero (edge density)", in.transition_test_note, {}};
  StripPlot curvature{"Node curvature SD per subject",
                      "SD of node curvature at the first transition",
                      "Each point summarises one subject's regions (their SD), so subjects, not nodes, are the units." +
                          (in.curvature_test_note.empty() ? "" : " " + in.curvature_test_note), {}};
  StripPlot zscores{"First transition against the null model", "z-score (null SD units)", in.z_test_note, {}};
  StripPlot ranks{"Percentile rank among null draws", "percentile rank of the first transition (fraction)",
                  "Mid-rank of the subject's first transition among its null draws and itself; resolution "
                  "1/(draws+1)." + (in.rank_test_note.empty() ? "" : " " + in.rank_test_note),
                  {}};
  bool any_curvature = false, any_z = false, any_rank = false;
  for (std::size_t k = 0; k < in.groups.size(); ++k) {
    const auto& g = in.groups[k];
    first.groups.push_back({g.name, g.first_transition, static_cast<int>(k)});
    curvature.groups.push_back({g.name, g.curvature_at_transition, static_cast<int>(k)});
    zscores.groups.push_back({g.name, g.transition_z, static_cast<int>(k)});
    ranks.groups.push_back({g.name, g.transition_percentile, static_cast<int>(k)});
    any_curvature |= !g.curvature_at_transition.empty();
    any_z |= std::any_of(g.transition_z.begin(), g.transition_z.end(), [](double z) { return std::isfinite(z); });
    any_rank |= !g.transition_percentile.empty();
  }
  h << "<h2>Transitions per subject</h2>\n<div class=\"pair\">\n<div class=\"panel\">" << svg_strip_plot(first) << "</div>\n";
  if (any_z) h << "<div class=\"panel\">" << svg_strip_plot(zscores) << "</div>\n";
  if (any_rank) h << "<div class=\"panel\">" << svg_strip_plot(ranks) << "</div>\n";
  if (any_curvature) h << "<div class=\"panel\">" << svg_strip_plot(curvature) << "</div>\n";
  h << "</div>\n<p class=\"lede\">Boxes: quartiles; thick line: median.</p>\n";

  // Tests.
  h << "<h2>Group tests</h2>\n<div class=\"panel\">";
  if (in.tests.empty()) {
    h << "<p class=\"lede\">No tests were run.</p>";
  } else {
    h << "<table><thead><tr><th>summary</th><th>statistic</th><th class=\"n\">value</th><th class=\"n\">Hedges g</th>"
         "<th class=\"n\">g interval</th><th class=\"n\">p</th><th class=\"n\">p (BH)</th><th>null distribution</th></tr></thead><tbody>\n";
    for (const auto& t : in.tests)
      h << "<tr><td>" << escape(t.summary) << "</td><td>" << escape(t.statistic) << "</td><td class=\"n\">" << num(t.value)
        << "</td><td class=\"n\">" << num(t.hedges_g, 3) << "</td><td class=\"n\">"
        << (std::isnan(t.g_lower) ? std::string("n/a") : num(t.g_lower, 3) + " to " + num(t.g_upper, 3))
        << "</td><td class=\"n\">" << num(t.p_value, 3)
        << "</td><td class=\"n\">" << num(t.p_adjusted, 3) << "</td><td>" << escape(t.method) << "</td></tr>\n";
    h << "</tbody></table>\n<p class=\"lede\">Two-sided permutation tests, headline summaries first.</p>";
    for (const auto& note : in.test_notes) h << "<p class=\"lede\">" << escape(note) << "</p>\n";
  }
  h << "</div>\n";
  if (!in.null_histograms.empty()) {
    h << "<h2 id=\"permutation-nulls\">Permutation nulls of the headline tests</h2>\n<div class=\"pair\">\n";
    for (const auto& hp : in.null_histograms) h << "<div class=\"panel\">" << svg_histogram(hp) << "</div>\n";
    h << "</div>\n";
  }
  if (!in.design_tests.rows.empty()) {
    h << "<h2 id=\"design-tests\">" << escape(in.design_title) << "</h2>\n<div class=\"panel wide\">"
      << table_html(in.design_tests, "design-table");
    for (const auto& note : in.design_notes) h << "<p class=\"lede\">" << escape(note) << "</p>\n";
    h << "</div>\n";
    if (!in.design_plots.empty()) {
      h << "<div class=\"pair\">\n";
      for (const auto& p : in.design_plots) h << "<div class=\"panel\">" << svg_line_plot(p) << "</div>\n";
      h << "</div>\n";
    }
  }
  if (!in.methods_text.empty()) {
    h << "<h2 id=\"methods\">Methods</h2>\n<div class=\"panel methods\">";
    std::size_t at = 0;
    while (at < in.methods_text.size()) {
      std::size_t end = in.methods_text.find("\n\n", at);
      if (end == std::string::npos) end = in.methods_text.size();
      const std::string para = in.methods_text.substr(at, end - at);
      if (!para.empty()) h << "<p>" << escape(para) << "</p>\n";
      at = end + 2;
    }
    h << "</div>\n";
  }
  h << provenance_html(in);
  h << "<footer>Made by " << escape(in.software.empty() ? std::string("critplex") : in.software)
    << ". Research software for the study of brain network topology; it is not a medical device and its "
       "results must not be used for diagnosis or treatment.</footer>\n</main>\n</body>\n</html>\n";
  return h.str();
}

}  // namespace critplex::report
