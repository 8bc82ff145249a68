#include "simulate/latent_factor.hpp"

#include <cmath>
#include <numbers>
#include <random>

#include "base/error.hpp"

namespace critplex::simulate {

namespace {

// Standard normal by Box-Muller from 53-bit uniforms: the standard library's
// distributions differ between implementations, this does not.
class Normal {
 public:
  explicit Normal(std::uint64_t seed) : rng_(seed) {}
  double operator()() {
    if (has_spare_) {
      has_spare_ = false;
      return spare_;
    }
    const double u1 = uniform_open(), u2 = uniform_open();
    const double radius = std::sqrt(-2.0 * std::log(u1));
    spare_ = radius * std::sin(2.0 * std::numbers::pi * u2);
    has_spare_ = true;
    return radius * std::cos(2.0 * std::numbers::pi * u2);
  }
  double uniform_open() { return (static_cast<double>(rng_() >> 11) + 0.5) * 0x1.0p-53; }
  std::uint64_t below(std::uint64_t n) { return rng_() % n; }  // bias < n / 2^64, negligible here

 private:
  std::mt19937_64 rng_;
  double spare_ = 0.0;
  bool has_spare_ = false;
};

// Unit-variance AR(1) path started from its stationary distribution.
std::vector<double> ar1(Normal& normal, std::size_t length, double phi) {
  std::vector<double> x(length);
  const double innovation = std::sqrt(1.0 - phi * phi);
  double value = normal();
  for (std::size_t t = 0; t < length; ++t) {
    x[t] = value;
    value = phi * value + innovation * normal();
  }
  return x;
}

}  // namespace

LatentFactorData latent_factor(const LatentFactorOptions& o) {
  if (o.regions < 2) fail(ErrorKind::argument, "latent factor model: regions must be at least 2");
  if (o.frames < 3) fail(ErrorKind::argument, "latent factor model: frames must be at least 3");
  if (o.modules < 1 || o.modules > o.regions) fail(ErrorKind::argument, "latent factor model: modules must be in [1, regions]");
  for (double phi : {o.factor_ar, o.noise_ar})
    if (!(phi > -1.0 && phi < 1.0)) fail(ErrorKind::argument, "latent factor model: AR(1) coefficients must be in (-1, 1)");
  if (!(o.loading_min >= 0.0 && o.loading_min <= o.loading_max))
    fail(ErrorKind::argument, "latent factor model: need 0 <= loading_min <= loading_max");

  Normal normal(o.seed);
  LatentFactorData d;
  // Modules in equal blocks, then the regions shuffled so labels carry no structure.
  d.module.resize(o.regions);
  for (std::size_t i = 0; i < o.regions; ++i) d.module[i] = i * o.modules / o.regions;
  for (std::size_t i = o.regions - 1; i > 0; --i) std::swap(d.module[i], d.module[normal.below(i + 1)]);
  d.loading.resize(o.regions);
  for (auto& a : d.loading) a = o.loading_min + (o.loading_max - o.loading_min) * normal.uniform_open();

  std::vector<std::vector<double>> factors;
  for (std::size_t m = 0; m < o.modules; ++m) factors.push_back(ar1(normal, o.frames, o.factor_ar));
  const std::vector<double> global = ar1(normal, o.frames, o.factor_ar);

  d.series.values.resize(static_cast<Eigen::Index>(o.frames), static_cast<Eigen::Index>(o.regions));
  for (std::size_t i = 0; i < o.regions; ++i) {
    const std::vector<double> noise = ar1(normal, o.frames, o.noise_ar);
    const auto& f = factors[d.module[i]];
    for (std::size_t t = 0; t < o.frames; ++t)
      d.series.values(static_cast<Eigen::Index>(t), static_cast<Eigen::Index>(i)) =
          d.loading[i] * f[t] + o.global_loading * global[t] + noise[t];
  }
  d.series.names = series::default_names(o.regions);
  d.series.source = "latent factor model";
  return d;
}

}  // namespace critplex::simulate
