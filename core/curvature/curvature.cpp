#include "curvature/curvature.hpp"

#include <algorithm>
#include <bit>
#include <cmath>
#include <limits>
#include <numeric>

#include "base/error.hpp"

namespace critplex::curvature {

namespace {

constexpr double not_a_number = std::numeric_limits<double>::quiet_NaN();

int128 gcd128(int128 a, int128 b) {
  while (b != 0) {
    int128 t = a % b;
    a = b;
    b = t;
  }
  return a;
}

// lcm(1..n), or 0 when it does not fit in 128 bits.
int128 lcm_up_to(std::size_t n) {
  int128 l = 1;
  for (std::size_t d = 2; d <= n; ++d) {
    const int128 g = gcd128(l, static_cast<int128>(d));
    int128 next;
    if (__builtin_mul_overflow(l / g, static_cast<int128>(d), &next)) return 0;
    l = next;
  }
  return l;
}

__extension__ typedef __float128 quad;

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
  const int128 denominator = lcm_up_to(dims);
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
    out.numerators = std::move(numerators);
    // Through binary128 so that the double is (almost always) the correctly rounded quotient.
    for (std::size_t i = 0; i < n; ++i)
      out.kappa[i] = static_cast<double>(static_cast<quad>(out.numerators[i]) / static_cast<quad>(denominator));
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

GaussBonnet check_gauss_bonnet(const NodeCurvature& c, int128 chi) {
  GaussBonnet g;
  g.chi = chi;
  g.sum_kappa = compensated_sum(c.kappa);
  const double scale = std::max(std::fabs(to_double(chi)), 1.0);
  g.relative_error = std::fabs(g.sum_kappa - to_double(chi)) / scale;
  if (c.exact) {
    int128 total = 0, target = 0;
    bool fits = !__builtin_mul_overflow(chi, c.denominator, &target);
    for (std::size_t i = 0; fits && i < c.numerators.size(); ++i)
      fits = !__builtin_add_overflow(total, c.numerators[i], &total);
    if (fits) {
      g.exact = true;
      g.method = "exact rational";
      if (total != target)
        fail(ErrorKind::internal, "Gauss-Bonnet identity fails exactly: sum of curvatures " + to_decimal(total) + "/" +
                                      to_decimal(c.denominator) + " but chi = " + to_decimal(chi));
      return g;
    }
  }
  g.method = "binary128";
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

double quantile_sorted(const std::vector<double>& sorted, double q) {
  if (sorted.empty()) return not_a_number;
  const double h = q * static_cast<double>(sorted.size() - 1);
  const std::size_t lo = static_cast<std::size_t>(std::floor(h));
  const std::size_t hi = std::min(lo + 1, sorted.size() - 1);
  return sorted[lo] + (h - static_cast<double>(lo)) * (sorted[hi] - sorted[lo]);
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
  std::sort(sorted.begin(), sorted.end());
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
  m2 /= n;
  m3 /= n;
  m4 /= n;
  if (d.min == d.max) {
    // A constant sample: no spread, shape undefined (scipy gives NaN too).
    d.mean = d.min;
    d.sd = 0.0;
    d.skewness = d.kurtosis = not_a_number;
  } else {
    d.sd = std::sqrt(m2);
    d.skewness = m3 / std::pow(m2, 1.5);
    d.kurtosis = m4 / (m2 * m2) - 3.0;
  }
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
  std::sort(pooled.begin(), pooled.end());
  double lo = pooled.front(), hi = pooled.back();
  if (lo == hi) return fixed_bins(lo - 0.5, hi + 0.5, 1);
  const double iqr = quantile_sorted(pooled, 0.75) - quantile_sorted(pooled, 0.25);
  std::size_t bins = 1;
  if (iqr > 0.0) {
    const double width = 2.0 * iqr / std::cbrt(static_cast<double>(pooled.size()));
    bins = static_cast<std::size_t>(std::ceil((hi - lo) / width));
  }
  bins = std::clamp<std::size_t>(bins, 1, std::max<std::size_t>(max_bins, 1));
  return fixed_bins(lo, hi, bins);
}

}  // namespace critplex::curvature
