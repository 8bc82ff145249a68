// Node curvature at chosen grid points from one static count of the graph there
// (curvature.at = a list of densities, or "transitions"; docs/methods.md, "Curvature").
//
// The graph at a grid point is the first m edges of the filtration. Its flag complex does
// not depend on the order in which those edges enter, so the clique engine can count it
// along any order of them and read one point at m. The order used here keeps every
// entering edge's common neighbourhood small: nodes in a degeneracy order (smallest
// degree removed first; Matula & Beck 1983), edges grouped by their lower endpoint, the
// groups of the latest nodes entering first and, within a group, the far endpoints
// latest first. When (a, b) enters (a before b), a node x adjacent to both is then a
// later neighbour of a and of b: the candidate set lies in N+(a) and N+(b), at most the
// degeneracy in size (the orientation of Chiba & Nishizeki 1985, Jain & Seshadhri 2020).
#pragma once

#include <cstddef>
#include <functional>
#include <string>
#include <vector>

#include "cliques/counts.hpp"
#include "curvature/on_grid.hpp"
#include "filtration/filtration.hpp"

namespace critplex::curvature {

// At::list: each density snaps to the last grid point at or below it, i.e. the in-range
// grid point with the most edges among those with at most the edges the grid itself
// would put at that density (floor(rho N(N-1)/2), completed to its tie group); every grid
// point holding that same edge count is chosen. `in_range[g]` marks the engine's points.
// Errors (ErrorKind::argument, naming "curvature.at") when no such point exists.
Selection select_listed(const filtration::Filtration& f, const std::vector<filtration::GridPoint>& grid,
                        const std::vector<char>& in_range, const std::vector<double>& densities);
// At::transitions: for each zero of `chi` (NaN = unknown; only in-range points are
// read), the grid indices from left - window to right + window, clipped to the range.
Selection select_transitions(const std::vector<filtration::GridPoint>& grid, const std::vector<char>& in_range,
                             const std::vector<double>& chi, std::size_t window);

// The first m edges of f in the order described above (tie groups and weights are kept
// per edge but no longer ordered: only a single point at m may be read from it).
filtration::Filtration static_order(const filtration::Filtration& f, std::size_t m);

// Node curvature sums of the graph of the first m edges, from one count of static_order
// (a single grid point at m). `base` gives the budgets and threads; the count itself is
// always full, with curvature sums.
cliques::GridCounts static_count(const filtration::Filtration& f, std::size_t m, const cliques::Options& base,
                                 const std::function<bool(double)>& progress);

// The counting rule of Options::Count::automatic: static counts unless
//   sum over the distinct chosen edge counts m_i of (m_i / m_last)^8 > 2,
// a cost model measured on a 400-region series (docs/methods.md): near the top a
// static count costs about (m / m_last)^8 of the last one's, and the walk to m_last
// about twice the last static count.
bool static_counts_cheaper(std::vector<std::size_t> edge_counts);  // repeats count once

// Node curvature sums at the selected points: one static count per distinct edge count,
// or (walk) one walk along the filtration to the last selected point reading only the
// selected points. Where the chi pass (`chi_pass`, may be null) is complete at a point,
// its exact chi must equal the count's (ErrorKind::internal otherwise). `sources[g]`
// says where to read point g.
struct StaticCounts {
  std::vector<cliques::GridCounts> counts;
  std::vector<PointSource> sources;  // one per grid point; counts == nullptr where not computed
  std::vector<std::string> stopped;  // per grid point: a budget that stopped its count, else ""
};
StaticCounts count_selected(const filtration::Filtration& f, const std::vector<filtration::GridPoint>& grid,
                            const Selection& selection, bool walk, const cliques::Options& base,
                            const cliques::GridCounts* chi_pass, const std::function<bool(double)>& progress);

}  // namespace critplex::curvature
