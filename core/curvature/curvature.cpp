#include "curvature/curvature.hpp"

#include <algorithm>
#include <bit>
#include <cmath>
#include <limits>
#include <numeric>

#include "base/error.hpp"
#include "base/numeric.hpp"

namespace critplex::curvature {

namespace {

constexpr double not_a_number = std::numeric_limits<double>::quiet_NaN();


// Neumaier's compensated sum: the result carries the rounding of only the last step.
double compensated_sum(const std::vector<double>& values) {
  double sum = 0.0, carry = 0.0;
  for (double v : values) {
    const double t = sum + v;
    carry += std::fabs(sum) >= std::fabs(v) ? (sum - t) + v : (v - t) + sum;
    sum = t;
  }
  return sum + carry;
}

// Ascending sort. Many values that are all small integers (Forman-Ricci curvature on
// a grid of densities) are sorted by counting, in linear time; the result is the same.
void sort_values(std::vector<double>& v) {
  bool small_integers = v.size() >= 256;
  double lo = 0.0, hi = 0.0;
  for (std::size_t i = 0; i < v.size() && small_integers; ++i) {
    const double x = v[i];
    // NaN fails the first test; -0.0 goes to std::sort, which keeps its sign.
    small_integers = x == std::floor(x) && std::fabs(x) < 1e15 && !(x == 0.0 && std::signbit(x));
    lo = i == 0 ? x : std::min(lo, x);
    hi = i == 0 ? x : std::max(hi, x);
  }
  if (!small_integers || hi - lo > 4.0 * static_cast<double>(v.size())) {
    std::sort(v.begin(), v.end());
    return;
  }
  std::vector<std::size_t> tally(static_cast<std::size_t>(hi - lo) + 1, 0);
  for (double x : v) ++tally[static_cast<std::size_t>(x - lo)];
  std::size_t out = 0;
  for (std::size_t k = 0; k < tally.size(); ++k)
    for (std::size_t c = 0; c < tally[k]; ++c) v[out++] = lo + static_cast<double>(k);
}

}  // namespace

NodeCurvature node_curvature(const std::vector<std::vector<int128>>& counts) {
  NodeCurvature out;
  const std::size_t n = counts.size();
  out.kappa.assign(n, 0.0);
  std::size_t dims = 1;
  for (std::size_t i = 0; i < n; ++i) {
    if (counts[i].empty() || counts[i][0] != 1)
      fail(ErrorKind::internal, "node clique counts of node " + std::to_string(i + 1) + " must start with 1");
    dims = std::max(dims, counts[i].size());
  }
  // Exact route: kappa_i = numerator_i / lcm(1..K+1), all in 128-bit integers.
  const int128 denominator = lcm_up_to(dims).value_or(0);
  bool exact = denominator != 0;
  std::vector<int128> numerators(n, 0);
  for (std::size_t i = 0; exact && i < n; ++i) {
    int128 num = 0;
    for (std::size_t k = 0; k < counts[i].size() && exact; ++k) {
      int128 term;
      if (__builtin_mul_overflow(counts[i][k], denominator / static_cast<int128>(k + 1), &term)) exact = false;
      else if (__builtin_add_overflow(num, (k % 2 == 0) ? term : -term, &num)) exact = false;
    }
    numerators[i] = num;
  }
  if (exact) {
    out.exact = true;
    out.denominator = denominator;
    // Through binary128 so that the double is (almost always) the correctly rounded quotient.
    for (std::size_t i = 0; i < n; ++i) {
      out.kappa[i] = static_cast<double>(static_cast<quad>(numerators[i]) / static_cast<quad>(denominator));
      out.numerators.push_back(cliques::Int256::of(numerators[i]));
    }
    return out;
  }
  // Fallback for counts too large for a common denominator: binary128 (113-bit) sums.
  for (std::size_t i = 0; i < n; ++i) {
    quad s = 0;
    for (std::size_t k = 0; k < counts[i].size(); ++k) {
      const quad term = static_cast<quad>(counts[i][k]) / static_cast<quad>(k + 1);
      s += (k % 2 == 0) ? term : -term;
    }
    out.kappa[i] = static_cast<double>(s);
  }
  return out;
}

NodeCurvature node_curvature_from_sums(const std::vector<cliques::Int256>& numerators, int128 denominator, bool exact,
                                       const NodeCurvature* previous) {
  if (!(denominator > 0)) fail(ErrorKind::internal, "node curvature: the common denominator must be positive");
  NodeCurvature out;
  out.exact = exact;
  out.fixed_point = !exact;
  out.denominator = denominator;
  out.numerators = numerators;
  const bool reuse = previous && previous->denominator == denominator && previous->numerators.size() == numerators.size();
  out.kappa.resize(numerators.size());
  for (std::size_t i = 0; i < numerators.size(); ++i)
    out.kappa[i] = reuse && previous->numerators[i] == numerators[i] ? previous->kappa[i] : numerators[i].ratio(denominator);
  return out;
}

GaussBonnet check_gauss_bonnet(const NodeCurvature& c, int128 chi) {
  GaussBonnet g;
  g.chi = chi;
  g.sum_kappa = compensated_sum(c.kappa);
  const double scale = std::max(std::fabs(to_double(chi)), 1.0);
  g.relative_error = std::fabs(g.sum_kappa - to_double(chi)) / scale;
  // 256-bit sums cannot overflow here: fewer than 2^64 numerators below 2^191 each.
  cliques::Int256 total;
  for (const auto& x : c.numerators) total += x;
  if (c.exact) {
    g.exact = true;
    g.method = "exact rational";
    if (!(total == cliques::Int256::product(chi, c.denominator)))
      fail(ErrorKind::internal, "Gauss-Bonnet identity fails exactly: sum of curvatures " +
                                    std::to_string(total.ratio(c.denominator)) + " but chi = " + to_decimal(chi));
    return g;
  }
  if (c.fixed_point) {
    // The integer sum carries only the rounding of the shares (below 2^-126 each).
    const double sum = total.ratio(c.denominator);
    if (!(std::fabs(sum - to_double(chi)) / scale <= 1e-12))
      fail(ErrorKind::internal, "Gauss-Bonnet identity fails: fixed-point sum of curvatures " + std::to_string(sum) +
                                    " but chi = " + to_decimal(chi));
  }
  g.method = c.fixed_point ? "fixed point" : "binary128";
  // Floating check: rounding allows a few ulps of the sum of |kappa_i|.
  double magnitude = 0.0;
  for (double k : c.kappa) magnitude += std::fabs(k);
  const double allowed = std::max(1e-12, 64.0 * std::numeric_limits<double>::epsilon() * magnitude / scale);
  if (!(g.relative_error <= allowed))
    fail(ErrorKind::internal, "Gauss-Bonnet identity fails: sum of curvatures " + std::to_string(g.sum_kappa) +
                                  " but chi = " + to_decimal(chi));
  return g;
}

Forman forman_ricci(std::size_t nodes, const std::vector<std::pair<std::uint32_t, std::uint32_t>>& edges,
                    std::size_t edge_count) {
  if (edge_count > edges.size()) fail(ErrorKind::internal, "forman_ricci: edge count beyond the edge list");
  const std::size_t words = (nodes + 63) / 64;
  std::vector<std::uint64_t> adjacency(nodes * words, 0);
  std::vector<double> degree(nodes, 0.0);
  for (std::size_t e = 0; e < edge_count; ++e) {
    const auto [u, v] = edges[e];
    if (u >= nodes || v >= nodes || u == v) fail(ErrorKind::internal, "forman_ricci: bad edge");
    adjacency[u * words + v / 64] |= std::uint64_t{1} << (v % 64);
    adjacency[v * words + u / 64] |= std::uint64_t{1} << (u % 64);
    degree[u] += 1.0;
    degree[v] += 1.0;
  }
  Forman f;
  f.edge_values.resize(edge_count);
  std::vector<double> node_sum(nodes, 0.0);
  for (std::size_t e = 0; e < edge_count; ++e) {
    const auto [u, v] = edges[e];
    int triangles = 0;
    for (std::size_t w = 0; w < words; ++w) triangles += std::popcount(adjacency[u * words + w] & adjacency[v * words + w]);
    const double value = 4.0 - degree[u] - degree[v] + 3.0 * triangles;
    f.edge_values[e] = value;
    node_sum[u] += value;
    node_sum[v] += value;
  }
  f.node_mean.resize(nodes);
  for (std::size_t i = 0; i < nodes; ++i) f.node_mean[i] = degree[i] > 0 ? node_sum[i] / degree[i] : not_a_number;
  return f;
}

std::size_t IntegerTally::size() const {
  std::size_t n = 0;
  for (std::size_t c : counts) n += c;
  return n;
}

double IntegerTally::at(std::size_t rank) const {
  for (std::size_t k = 0; k < counts.size(); ++k) {
    if (rank < counts[k]) return static_cast<double>(lowest + static_cast<long long>(k));
    rank -= counts[k];
  }
  fail(ErrorKind::internal, "IntegerTally::at: rank beyond the tally");
}

FormanSweep::FormanSweep(std::size_t nodes, const std::vector<std::pair<std::uint32_t, std::uint32_t>>& edges)
    : nodes_(nodes), words_((nodes + 63) / 64), edges_(edges), adjacency_(nodes * words_, 0), incident_(nodes),
      value_(edges.size(), 0), node_sum_(nodes, 0) {
  if (nodes <= 2048) index_.assign(nodes * nodes, 0);  // 16 MB at most
  tally_.lowest = 6 - 2 * static_cast<long long>(nodes);
  tally_.counts.assign(3 * nodes + 1, 0);  // [6 - 2N, N]
}

std::size_t FormanSweep::edge_index(std::uint32_t a, std::uint32_t b) const {
  if (!index_.empty()) return index_[a * nodes_ + b];
  return sparse_index_.at((std::uint64_t{std::min(a, b)} << 32) | std::max(a, b));
}

void FormanSweep::change(std::size_t edge, int delta) {
  const auto [a, b] = edges_[edge];
  --tally_.counts[static_cast<std::size_t>(value_[edge] - tally_.lowest)];
  value_[edge] += delta;
  ++tally_.counts[static_cast<std::size_t>(value_[edge] - tally_.lowest)];
  node_sum_[a] += delta;
  node_sum_[b] += delta;
}

void FormanSweep::advance(std::size_t edge_count) {
  if (edge_count > edges_.size() || edge_count < entered_) fail(ErrorKind::internal, "FormanSweep: bad edge count");
  for (; entered_ < edge_count; ++entered_) {
    const auto [u, v] = edges_[entered_];
    if (u >= nodes_ || v >= nodes_ || u == v) fail(ErrorKind::internal, "FormanSweep: bad edge");
    // One more degree at u and at v: every edge already there loses 1.
    for (std::uint32_t e : incident_[u]) change(e, -1);
    for (std::uint32_t e : incident_[v]) change(e, -1);
    // Each common neighbour w closes a triangle uvw: uw and vw gain 3.
    int triangles = 0;
    const std::uint64_t* ru = adjacency_.data() + u * words_;
    const std::uint64_t* rv = adjacency_.data() + v * words_;
    for (std::size_t w = 0; w < words_; ++w)
      for (std::uint64_t bits = ru[w] & rv[w]; bits; bits &= bits - 1) {
        const auto x = static_cast<std::uint32_t>(w * 64 + static_cast<std::size_t>(std::countr_zero(bits)));
        change(edge_index(u, x), 3);
        change(edge_index(v, x), 3);
        ++triangles;
      }
    const int value = 4 - static_cast<int>(incident_[u].size() + 1) - static_cast<int>(incident_[v].size() + 1) + 3 * triangles;
    value_[entered_] = value;
    ++tally_.counts[static_cast<std::size_t>(value - tally_.lowest)];
    node_sum_[u] += value;
    node_sum_[v] += value;
    adjacency_[u * words_ + v / 64] |= std::uint64_t{1} << (v % 64);
    adjacency_[v * words_ + u / 64] |= std::uint64_t{1} << (u % 64);
    incident_[u].push_back(static_cast<std::uint32_t>(entered_));
    incident_[v].push_back(static_cast<std::uint32_t>(entered_));
    if (!index_.empty()) {
      index_[u * nodes_ + v] = index_[v * nodes_ + u] = static_cast<std::uint32_t>(entered_);
    } else {
      sparse_index_[(std::uint64_t{std::min(u, v)} << 32) | std::max(u, v)] = static_cast<std::uint32_t>(entered_);
    }
  }
}

std::vector<double> FormanSweep::node_mean() const {
  std::vector<double> mean(nodes_);
  for (std::size_t i = 0; i < nodes_; ++i)
    mean[i] = incident_[i].empty() ? not_a_number
                                   : static_cast<double>(node_sum_[i]) / static_cast<double>(incident_[i].size());
  return mean;
}

// Standard deviation, skewness g1 and excess kurtosis g2 from the central moments
// m2, m3, m4 (divided by n). A constant sample has no spread and no shape (scipy gives
// NaN too); its mean is set to the value itself, free of rounding.
static void set_shape(Distribution& d, double m2, double m3, double m4) {
  if (d.min == d.max) {
    d.mean = d.min;
    d.sd = 0.0;
    d.skewness = d.kurtosis = not_a_number;
  } else {
    d.sd = std::sqrt(m2);
    d.skewness = m3 / std::pow(m2, 1.5);
    d.kurtosis = m4 / (m2 * m2) - 3.0;
  }
}

Distribution describe(const std::vector<double>& values, const std::vector<double>& levels,
                      const std::vector<double>& bin_edges) {
  Distribution d;
  d.count = values.size();
  const std::size_t bins = bin_edges.size() >= 2 ? bin_edges.size() - 1 : 0;
  d.histogram.assign(bins, 0);
  if (values.empty()) {
    d.mean = d.sd = d.skewness = d.kurtosis = d.min = d.max = not_a_number;
    d.quantiles.assign(levels.size(), not_a_number);
    return d;
  }
  std::vector<double> sorted = values;
  sort_values(sorted);
  d.min = sorted.front();
  d.max = sorted.back();
  const double n = static_cast<double>(values.size());
  d.mean = compensated_sum(sorted) / n;
  double m2 = 0.0, m3 = 0.0, m4 = 0.0;
  for (double v : sorted) {
    const double x = v - d.mean;
    m2 += x * x;
    m3 += x * x * x;
    m4 += x * x * x * x;
  }
  set_shape(d, m2 / n, m3 / n, m4 / n);
  for (double q : levels) d.quantiles.push_back(quantile_sorted(sorted, q));
  if (bins > 0) {
    for (double v : sorted) {
      if (v < bin_edges.front()) { ++d.below; continue; }
      if (v > bin_edges.back()) { ++d.above; continue; }
      auto it = std::upper_bound(bin_edges.begin(), bin_edges.end(), v);
      std::size_t b = static_cast<std::size_t>(it - bin_edges.begin());
      b = b == 0 ? 0 : b - 1;
      if (b >= bins) b = bins - 1;  // the right edge belongs to the last bin
      ++d.histogram[b];
    }
  }
  return d;
}

namespace {
// The histogram bin of v (every bin [a, b) except the last, [a, b]), or counts it outside.
void bin_value(double v, std::size_t times, const std::vector<double>& bin_edges, Distribution& d) {
  const std::size_t bins = d.histogram.size();
  if (bins == 0) return;
  if (v < bin_edges.front()) { d.below += times; return; }
  if (v > bin_edges.back()) { d.above += times; return; }
  auto it = std::upper_bound(bin_edges.begin(), bin_edges.end(), v);
  std::size_t b = static_cast<std::size_t>(it - bin_edges.begin());
  b = b == 0 ? 0 : b - 1;
  if (b >= bins) b = bins - 1;  // the right edge belongs to the last bin
  d.histogram[b] += times;
}
}  // namespace

Distribution describe_tally(const IntegerTally& values, const std::vector<double>& levels,
                      const std::vector<double>& bin_edges) {
  Distribution d;
  d.count = values.size();
  d.histogram.assign(bin_edges.size() >= 2 ? bin_edges.size() - 1 : 0, 0);
  if (d.count == 0) {
    d.mean = d.sd = d.skewness = d.kurtosis = d.min = d.max = not_a_number;
    d.quantiles.assign(levels.size(), not_a_number);
    return d;
  }
  std::size_t first = 0, last = values.counts.size() - 1;
  while (values.counts[first] == 0) ++first;
  while (values.counts[last] == 0) --last;
  auto value_of = [&](std::size_t k) { return static_cast<double>(values.lowest + static_cast<long long>(k)); };
  d.min = value_of(first);
  d.max = value_of(last);
  const double n = static_cast<double>(d.count);
  long long sum = 0;  // exact: |values| <= 2N, fewer than N^2 of them
  for (std::size_t k = first; k <= last; ++k) sum += static_cast<long long>(values.counts[k]) * (values.lowest + static_cast<long long>(k));
  d.mean = static_cast<double>(sum) / n;
  double m2 = 0.0, m3 = 0.0, m4 = 0.0;
  for (std::size_t k = first; k <= last; ++k) {
    if (values.counts[k] == 0) continue;
    const double c = static_cast<double>(values.counts[k]), x = value_of(k) - d.mean;
    m2 += c * x * x;
    m3 += c * x * x * x;
    m4 += c * x * x * x * x;
    bin_value(value_of(k), values.counts[k], bin_edges, d);
  }
  set_shape(d, m2 / n, m3 / n, m4 / n);
  for (double q : levels) d.quantiles.push_back(quantile_type7(d.count, q, [&](std::size_t r) { return values.at(r); }));
  return d;
}

std::vector<double> freedman_diaconis_bins_tally(const IntegerTally& pooled, std::size_t max_bins) {
  const std::size_t n = pooled.size();
  if (n == 0) return fixed_bins(0.0, 1.0, 1);
  const double lo = pooled.at(0), hi = pooled.at(n - 1);
  if (lo == hi) return fixed_bins(lo - 0.5, hi + 0.5, 1);
  auto at = [&](std::size_t r) { return pooled.at(r); };
  const double iqr = quantile_type7(n, 0.75, at) - quantile_type7(n, 0.25, at);
  std::size_t bins = 1;
  if (iqr > 0.0) {
    const double width = 2.0 * iqr / std::cbrt(static_cast<double>(n));
    bins = static_cast<std::size_t>(std::ceil((hi - lo) / width));
  }
  bins = std::clamp<std::size_t>(bins, 1, std::max<std::size_t>(max_bins, 1));
  return fixed_bins(lo, hi, bins);
}

std::vector<double> fixed_bins(double lo, double hi, std::size_t bins) {
  if (!(std::isfinite(lo) && std::isfinite(hi) && lo < hi))
    fail(ErrorKind::argument, "histogram range must be two finite numbers lo < hi");
  if (bins == 0) fail(ErrorKind::argument, "histogram needs at least one bin");
  std::vector<double> edges(bins + 1);
  for (std::size_t b = 0; b <= bins; ++b)
    edges[b] = lo + (hi - lo) * static_cast<double>(b) / static_cast<double>(bins);
  edges[bins] = hi;
  return edges;
}

std::vector<double> freedman_diaconis_bins(std::vector<double> pooled, std::size_t max_bins) {
  pooled.erase(std::remove_if(pooled.begin(), pooled.end(), [](double v) { return !std::isfinite(v); }), pooled.end());
  if (pooled.empty()) return fixed_bins(0.0, 1.0, 1);
  const auto [min_it, max_it] = std::minmax_element(pooled.begin(), pooled.end());
  const double lo = *min_it, hi = *max_it;
  if (lo == hi) return fixed_bins(lo - 0.5, hi + 0.5, 1);
  // Order statistics by selection (linear time; the pool holds every point's values).
  auto at = [&](std::size_t k) {
    std::nth_element(pooled.begin(), pooled.begin() + static_cast<std::ptrdiff_t>(k), pooled.end());
    return pooled[k];
  };
  const double iqr = quantile_type7(pooled.size(), 0.75, at) - quantile_type7(pooled.size(), 0.25, at);
  std::size_t bins = 1;
  if (iqr > 0.0) {
    const double width = 2.0 * iqr / std::cbrt(static_cast<double>(pooled.size()));
    bins = static_cast<std::size_t>(std::ceil((hi - lo) / width));
  }
  bins = std::clamp<std::size_t>(bins, 1, std::max<std::size_t>(max_bins, 1));
  return fixed_bins(lo, hi, bins);
}

}  // namespace critplex::curvature
