#include "curvature/static_count.hpp"

#include <algorithm>
#include <cmath>
#include <map>

#include "base/error.hpp"
#include "base/exact.hpp"
#include "base/option_schema.hpp"
#include "transitions/transitions.hpp"

namespace critplex::curvature {

namespace {

std::string number_text(double x) { return quoted_value(Json(x)); }

}  // namespace

Selection select_listed(const filtration::Filtration& f, const std::vector<filtration::GridPoint>& grid,
                        const std::vector<char>& in_range, const std::vector<double>& densities) {
  Selection s;
  s.at = Options::At::list;
  const double pairs = static_cast<double>(f.pairs());
  std::vector<char> chosen(grid.size(), 0);
  for (double rho : densities) {
    // The edges the grid itself would put at rho (filtration::make_grid).
    const auto asked = static_cast<std::size_t>(std::floor(rho * pairs + 1e-9));
    const std::size_t limit = f.tie_group_end(std::min(asked, f.edges.size()));
    std::size_t best = grid.size();
    for (std::size_t g = 0; g < grid.size(); ++g)
      if (in_range[g] && grid[g].edges <= limit && (best == grid.size() || grid[g].edges > grid[best].edges)) best = g;
    if (best == grid.size())
      fail(ErrorKind::argument, "sweep options: \"curvature.at\": density " + number_text(rho) +
                                    " lies below every grid point of the curvature range");
    s.snapped.push_back({rho, best});
    for (std::size_t g = 0; g < grid.size(); ++g)
      if (in_range[g] && grid[g].edges == grid[best].edges) chosen[g] = 1;
  }
  for (std::size_t g = 0; g < grid.size(); ++g)
    if (chosen[g]) s.points.push_back(g);
  return s;
}

Selection select_transitions(const std::vector<filtration::GridPoint>& grid, const std::vector<char>& in_range,
                             const std::vector<double>& chi, std::size_t window) {
  if (chi.size() != grid.size() || in_range.size() != grid.size())
    fail(ErrorKind::internal, "curvature: the chi curve and the range must cover the grid");
  Selection s;
  s.at = Options::At::transitions;
  s.window = window;
  std::vector<double> density(grid.size()), curve(chi);
  for (std::size_t g = 0; g < grid.size(); ++g) {
    density[g] = grid[g].density;
    if (!in_range[g]) curve[g] = std::nan("");
  }
  std::vector<char> chosen(grid.size(), 0);
  for (const transitions::Crossing& c : transitions::sign_changes(density, curve)) {
    s.zeros.push_back({c.density, c.direction, c.touch, c.left, c.right});
    const std::size_t first = c.left >= window ? c.left - window : 0;
    const std::size_t last = std::min(grid.size() - 1, c.right + window);
    for (std::size_t g = first; g <= last; ++g)
      if (in_range[g]) chosen[g] = 1;
  }
  for (std::size_t g = 0; g < grid.size(); ++g)
    if (chosen[g]) s.points.push_back(g);
  return s;
}

filtration::Filtration static_order(const filtration::Filtration& f, std::size_t m) {
  m = std::min(m, f.edges.size());
  std::size_t degeneracy = 0;
  const std::vector<std::uint32_t> position = cliques::degeneracy_labels(f.nodes, f.edges, m, degeneracy);
  filtration::Filtration out;
  out.nodes = f.nodes;
  out.mode = f.mode;
  out.edges.assign(f.edges.begin(), f.edges.begin() + static_cast<std::ptrdiff_t>(m));
  // Lower endpoint (earlier in the order) latest first; within its group, the far
  // endpoint latest first.
  auto key = [&](const filtration::Edge& e) {
    const std::size_t a = position[e.u], b = position[e.v];
    return std::make_pair(std::min(a, b), std::max(a, b));
  };
  std::sort(out.edges.begin(), out.edges.end(),
            [&](const filtration::Edge& x, const filtration::Edge& y) { return key(x) > key(y); });
  return out;
}

cliques::GridCounts static_count(const filtration::Filtration& f, std::size_t m, const cliques::Options& base,
                                 const std::function<bool(double)>& progress) {
  const filtration::Filtration ordered = static_order(f, m);
  filtration::GridPoint point;
  point.edges = ordered.edges.size();
  point.density = f.density(point.edges);
  point.requested = point.density;
  cliques::Options o = base;
  o.chi_only = false;
  o.node_counts = false;
  o.node_curvature = true;
  o.max_density.reset();
  return cliques::count_on_grid(ordered, {point}, o, progress);
}

bool static_counts_cheaper(std::vector<std::size_t> edge_counts) {
  std::sort(edge_counts.begin(), edge_counts.end());
  edge_counts.erase(std::unique(edge_counts.begin(), edge_counts.end()), edge_counts.end());
  std::size_t last = 0;
  for (std::size_t m : edge_counts) last = std::max(last, m);
  if (last == 0) return true;
  double cost = 0.0;
  for (std::size_t m : edge_counts) cost += std::pow(static_cast<double>(m) / static_cast<double>(last), 8.0);
  return cost <= 2.0;
}

StaticCounts count_selected(const filtration::Filtration& f, const std::vector<filtration::GridPoint>& grid,
                            const Selection& selection, bool walk, const cliques::Options& base,
                            const cliques::GridCounts* chi_pass, const std::function<bool(double)>& progress) {
  StaticCounts out;
  out.sources.resize(grid.size());
  out.stopped.assign(grid.size(), "");
  // Distinct edge counts, each read from one point of one count.
  std::map<std::size_t, std::pair<std::size_t, std::size_t>> by_edges;  // m -> (count, point)
  for (std::size_t g : selection.points) by_edges.emplace(std::min(grid[g].edges, f.edges.size()), std::make_pair(0, 0));
  if (walk) {
    std::vector<filtration::GridPoint> points;
    for (auto& [m, where] : by_edges) {
      where = {0, points.size()};
      filtration::GridPoint p;
      p.edges = m;
      p.density = p.requested = f.density(m);
      points.push_back(p);
    }
    filtration::Filtration cut = f;
    cut.edges.resize(by_edges.empty() ? 0 : by_edges.rbegin()->first);
    cliques::Options o = base;
    o.chi_only = false;
    o.node_counts = false;
    o.node_curvature = true;
    o.max_density.reset();
    out.counts.push_back(cliques::count_on_grid(cut, points, o, progress));
  } else {
    out.counts.reserve(by_edges.size());  // reserved: the sources' pointers stay put
    for (auto& [m, where] : by_edges) {
      where = {out.counts.size(), 0};
      out.counts.push_back(static_count(f, m, base, progress));
    }
  }
  for (std::size_t g : selection.points) {
    const auto [k, point] = by_edges.at(std::min(grid[g].edges, f.edges.size()));
    const cliques::GridCounts& c = out.counts[k];
    if (point >= c.complete_points) {
      out.stopped[g] = c.stopped_by.empty() ? "incomplete" : c.stopped_by;
      continue;
    }
    // The complex does not depend on the order its edges entered in: chi must agree.
    if (chi_pass && g < chi_pass->complete_points && chi_pass->chi[g] != c.chi[point])
      fail(ErrorKind::internal, "curvature: the count at grid point " + std::to_string(g) + " gives chi = " +
                                    to_decimal(c.chi[point]) + " but the chi pass gives " + to_decimal(chi_pass->chi[g]));
    out.sources[g] = {&c, point};
  }
  return out;
}

}  // namespace critplex::curvature
