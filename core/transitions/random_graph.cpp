#include "transitions/random_graph.hpp"

#include <quadmath.h>

#include <algorithm>
#include <cmath>

#include "base/error.hpp"
#include "base/numeric.hpp"

namespace critplex::transitions {

namespace {

const quad one = 1;
const quad half = static_cast<quad>(0.5);

// A number hi + lo with |lo| <= ulp(hi)/2: "paired binary128".
struct Pair {
  quad hi = 0;
  quad lo = 0;
};

inline Pair two_sum(quad a, quad b) {
  const quad s = a + b;
  const quad bb = s - a;
  return {s, (a - (s - bb)) + (b - bb)};
}
inline Pair quick_two_sum(quad a, quad b) {
  const quad s = a + b;
  return {s, b - (s - a)};
}
inline Pair add(Pair a, Pair b) {
  Pair s = two_sum(a.hi, b.hi);
  Pair t = two_sum(a.lo, b.lo);
  s.lo += t.hi;
  s = quick_two_sum(s.hi, s.lo);
  s.lo += t.lo;
  return quick_two_sum(s.hi, s.lo);
}
inline Pair negate(Pair a) { return {-a.hi, -a.lo}; }
inline Pair mul(Pair a, Pair b) {
  const quad p = a.hi * b.hi;
  const quad e = fmaq(a.hi, b.hi, -p);
  return quick_two_sum(p, e + (a.hi * b.lo + a.lo * b.hi));
}
inline Pair mul(Pair a, quad b) {
  const quad p = a.hi * b;
  const quad e = fmaq(a.hi, b, -p);
  return quick_two_sum(p, e + a.lo * b);
}
inline Pair div(Pair a, quad d) {
  const quad q1 = a.hi / d;
  // remainder a - q1 d, exactly: q1 d = p + e
  const quad p = q1 * d;
  const quad e = fmaq(q1, d, -p);
  const quad r = ((a.hi - p) - e) + a.lo;
  return quick_two_sum(q1, r / d);
}
inline quad magnitude(Pair a) { return fabsq(a.hi); }

// Plain binary128 for the easy cases (much faster), the pair where cancellation needs it.
inline quad add(quad a, quad b) { return a + b; }
inline quad negate(quad a) { return -a; }
inline quad mul(quad a, quad b) { return a * b; }
inline quad div(quad a, quad d) { return a / d; }
inline quad magnitude(quad a) { return fabsq(a); }
inline quad high(quad a) { return a; }
inline quad high(Pair a) { return a.hi + a.lo; }

// log2 of a conservative unit roundoff per operation.
template <class Number> constexpr int unit_roundoff_log2();
template <> constexpr int unit_roundoff_log2<quad>() { return -110; }
template <> constexpr int unit_roundoff_log2<Pair>() { return -220; }

struct Series {
  quad sum = 0;
  quad absolute = 0;   // sum of |t_k|
  std::size_t terms = 0;
  int roundoff_log2 = 0;
};

// Both closed forms as sum_k (-1)^k t_k with a term ratio that decreases in k:
//   chi:   t_1 = N,  t_{k+1} = t_k (N-k)/(k+1) p^k,       sign (-1)^(k-1), k = 1..N
//   kappa: t_0 = 1,  t_{k+1} = t_k (M-k)/(k+2) p^(k+1),   sign (-1)^k,     k = 0..M, M = N-1
template <class Number>
Series alternating_series(std::size_t n, double p, bool kappa) {
  Series s;
  Number sum{};
  const quad qp = p;
  const quad tiny = ldexpq(one, unit_roundoff_log2<Number>() - 20);
  const std::size_t top = kappa ? n - 1 : n;
  std::size_t k = kappa ? 0 : 1;
  Number term{};
  term = add(term, Number{kappa ? one : static_cast<quad>(n)});
  Number power{};
  power = add(power, Number{qp});  // the power of p in the next ratio: p^(k+1) for kappa, p^k for chi
  bool positive = true;
  quad largest = 0;
  for (; k <= top; ++k) {
    sum = add(sum, positive ? term : negate(term));
    s.absolute += magnitude(term);
    largest = std::max(largest, magnitude(term));
    ++s.terms;
    if (k == top) break;
    const quad numerator = static_cast<quad>(top - k);
    const quad denominator = static_cast<quad>(kappa ? k + 2 : k + 1);
    term = div(mul(mul(term, Number{numerator}), power), denominator);
    const quad ratio = numerator / denominator * high(power);
    power = mul(power, Number{qp});
    positive = !positive;
    // Past the largest term the ratios only shrink, so once a term is negligible and the
    // ratio below 1/2 the rest of the tail is below that term again.
    if (magnitude(term) <= tiny * largest && ratio < half) {
      s.absolute += 2 * magnitude(term);
      break;
    }
    if (magnitude(term) == 0) break;
  }
  s.sum = high(sum);
  s.roundoff_log2 = unit_roundoff_log2<Number>();
  return s;
}

RandomGraphValue finish(const Series& s) {
  RandomGraphValue v;
  const quad value = s.sum;
  v.value = static_cast<double>(value);
  char buffer[64];
  quadmath_snprintf(buffer, sizeof buffer, "%.34Qe", value);
  v.decimal = buffer;
  const quad bound = s.absolute * ldexpq(one, s.roundoff_log2) * static_cast<quad>(4 * s.terms + 8);
  v.relative_error_bound = value == 0 ? (bound == 0 ? 0.0 : HUGE_VAL) : static_cast<double>(bound / fabsq(value));
  v.reliable = v.relative_error_bound < 1e-15;
  return v;
}

// Plain binary128 when its error estimate is already far below double rounding, else the pair.
RandomGraphValue evaluate(std::size_t n, double p, bool kappa) {
  RandomGraphValue fast = finish(alternating_series<quad>(n, p, kappa));
  if (fast.relative_error_bound < 1e-20) return fast;
  return finish(alternating_series<Pair>(n, p, kappa));
}

void check_args(std::size_t nodes, double p) {
  if (nodes < 1) fail(ErrorKind::argument, "random graph: the number of nodes must be at least 1");
  if (!(p >= 0.0 && p <= 1.0)) fail(ErrorKind::argument, "random graph: p must be in [0, 1], got " + std::to_string(p));
}

}  // namespace

const char* random_graph_arithmetic() { return "paired binary128 (__float128 hi + lo, about 67 significant digits)"; }

RandomGraphValue expected_chi(std::size_t nodes, double p) {
  check_args(nodes, p);
  // The full simplex is contractible: E[chi] = 1 at p = 1 (the sum would need ~N digits).
  if (p == 1.0) return RandomGraphValue{1.0, "1", 0.0, true};
  return evaluate(nodes, p, false);
}

RandomGraphValue expected_kappa(std::size_t nodes, double p) {
  check_args(nodes, p);
  if (p == 1.0) {
    RandomGraphValue v;
    v.value = 1.0 / static_cast<double>(nodes);
    char buffer[64];
    quadmath_snprintf(buffer, sizeof buffer, "%.34Qe", one / static_cast<quad>(nodes));
    v.decimal = buffer;
    return v;
  }
  if (nodes == 1) return RandomGraphValue{1.0, "1", 0.0, true};
  return evaluate(nodes, p, true);
}

RandomGraphZeros random_graph_zeros(std::size_t nodes, double max_p, std::size_t scan_points) {
  if (nodes < 2) fail(ErrorKind::argument, "random graph: the number of nodes must be at least 2");
  if (!(max_p > 0.0 && max_p <= 1.0))
    fail(ErrorKind::argument, "random graph: the largest p must be in (0, 1], got " + std::to_string(max_p));
  if (scan_points < 10) fail(ErrorKind::argument, "random graph: at least 10 scan points are needed");
  RandomGraphZeros out;
  out.scan_points = scan_points;
  // Scan grid: half log-spaced from 0.01/N to 0.1, half linear from 0.1 to max_p.
  std::vector<double> scan;
  const double low = std::min(0.01 / static_cast<double>(nodes), max_p / 2);
  const double middle = std::min(0.1, max_p);
  const std::size_t half = scan_points / 2;
  for (std::size_t i = 0; i < half; ++i)
    scan.push_back(low * std::pow(middle / low, static_cast<double>(i) / static_cast<double>(half)));
  const std::size_t rest = scan_points - half;
  for (std::size_t i = 0; i <= rest; ++i)
    scan.push_back(middle + (max_p - middle) * static_cast<double>(i) / static_cast<double>(rest));

  // Both sums change sign where the leading term hands over to the next one: the
  // ratio of adjacent terms, (N-k)/(k+1) p^k for chi and (M-k)/(k+2) p^(k+1) for kappa
  // (M = N-1), crosses 1 at p_k. Those crossovers and the points halfway between them
  // (in log p, where one term dominates) join the scan, so each hand-over is bracketed
  // however close the zeros crowd as p grows, not only those wider than the scan spacing.
  auto with_crossovers = [&](bool kappa) {
    std::vector<double> grid = scan;
    const std::size_t m = kappa ? nodes - 1 : nodes;
    double previous = 0.0;
    for (std::size_t k = 1; k < m; ++k) {
      const double exponent = static_cast<double>(kappa ? k + 1 : k);
      const double ratio = static_cast<double>(kappa ? k + 2 : k + 1) / static_cast<double>(m - k);
      const double crossover = std::pow(ratio, 1.0 / exponent);
      if (!(crossover > low) || !(crossover < max_p)) {
        if (crossover >= max_p) break;
        continue;
      }
      grid.push_back(crossover);
      if (previous > 0.0) grid.push_back(std::sqrt(previous * crossover));
      previous = crossover;
    }
    std::sort(grid.begin(), grid.end());
    grid.erase(std::unique(grid.begin(), grid.end()), grid.end());
    return grid;
  };

  // Each bracketed sign change is refined by regula falsi with the Illinois rule (halve
  // the weight of an end that stays put), which converges superlinearly on these smooth
  // sums, to double resolution.
  auto refine = [](auto&& evaluate, double a, double fa, double b, double fb) {
    int kept = 0;  // which end stayed last time: -1 left, +1 right
    double c = 0.5 * (a + b);
    for (int iteration = 0; iteration < 200; ++iteration) {
      c = b - fb * (b - a) / (fb - fa);
      if (!(c > a && c < b)) c = 0.5 * (a + b);
      if (c <= a || c >= b) break;
      const double fc = evaluate(c).value;
      if (fc == 0.0) return c;
      if ((fc > 0) == (fb > 0)) {
        b = c;
        fb = fc;
        if (kept == -1) fa *= 0.5;
        kept = -1;
      } else {
        a = c;
        fa = fc;
        if (kept == +1) fb *= 0.5;
        kept = +1;
      }
      if (b - a <= 4e-16 * b) break;
    }
    return 0.5 * (a + b);
  };

  auto find = [&](auto&& evaluate, const std::vector<double>& grid, std::vector<double>& zeros,
                  std::vector<int>& directions) {
    double reliable_up_to = grid.front();
    double previous_p = grid.front();
    RandomGraphValue previous = evaluate(previous_p);
    if (!previous.reliable) return 0.0;
    for (std::size_t i = 1; i < grid.size(); ++i) {
      const double p = grid[i];
      RandomGraphValue v = evaluate(p);
      if (!v.reliable) break;
      reliable_up_to = p;
      if (v.value != 0.0 && previous.value != 0.0 && (v.value > 0) != (previous.value > 0)) {
        zeros.push_back(refine(evaluate, previous_p, previous.value, p, v.value));
        directions.push_back(previous.value > 0 ? -1 : +1);
      } else if (v.value == 0.0) {
        zeros.push_back(p);
        directions.push_back(previous.value > 0 ? -1 : +1);
      }
      if (v.value != 0.0) {
        previous = v;
        previous_p = p;
      }
    }
    return reliable_up_to;
  };
  const double chi_ok =
      find([&](double p) { return expected_chi(nodes, p); }, with_crossovers(false), out.chi_zeros, out.chi_directions);
  const double kappa_ok = find([&](double p) { return expected_kappa(nodes, p); }, with_crossovers(true),
                               out.kappa_zeros, out.kappa_directions);
  out.reliable_up_to = std::min(chi_ok, kappa_ok);
  return out;
}

const OptionSection& expectation_option_section() {
  static const OptionSection section{
      "random_graph",
      "random-graph options",
      "cpx_random_graph_expectations",
      "The Erdos-Renyi closed forms E[chi] and E[kappa] in extended precision, and their zeros.",
      {{.key = "zeros", .type = "boolean", .default_value = true, .meaning = "also the zeros of E[chi] and E[kappa]"},
       {.key = "max_p", .type = "number", .default_value = 1.0, .min = 0, .max = 1, .min_open = true,
        .meaning = "largest p of the zero search"},
       {.key = "scan_points", .type = "integer", .default_value = 2000, .min = 10, .max = 10000000,
        .meaning = "points of the scan that brackets the zeros"}}};
  return section;
}

ExpectationOptions parse_expectation_options(const Json& options, const std::string& where) {
  SchemaReader r(options, expectation_option_section(), where);
  ExpectationOptions o;
  o.zeros = r.boolean("zeros");
  o.max_p = r.number("max_p");
  o.scan_points = static_cast<std::size_t>(r.integer("scan_points"));
  r.finish();
  return o;
}

}  // namespace critplex::transitions
