// Timing of the signals stage on one input file (NPY, frames x columns), for
// tests/bench/signals.py, which runs the Python stack on the same files in the same run.
//   bench_signals fmri SERIES.npy CONFOUNDS.npy TR LOW HIGH   confound regression + band-pass + Ledoit-Wolf
//   bench_signals meg SERIES.npy FS BANDS                      band-pass + wPLI per band ("8:13,13:30,...")
// Prints one JSON line: seconds per step and a checksum of the result for cross-checking.
#include <chrono>
#include <cstdio>
#include <iostream>
#include <sstream>
#include <string>
#include <vector>

#include "connectivity/phase.hpp"
#include "connectivity/shrinkage.hpp"
#include "io/files.hpp"
#include "series/clean.hpp"
#include "series/fft.hpp"
#include "series/filter.hpp"

using namespace critplex;
using clock_type = std::chrono::steady_clock;

static double since(clock_type::time_point t0) {
  return std::chrono::duration<double>(clock_type::now() - t0).count();
}

int main(int argc, char** argv) {
  try {
    const std::string mode = argc > 1 ? argv[1] : "";
    io::TableOptions npy;
    npy.format = "npy";
    if (mode == "fmri" && argc == 7) {
      const Eigen::MatrixXd x = io::read_table(argv[2], npy).values;
      const Eigen::MatrixXd c = io::read_table(argv[3], npy).values;
      const double tr = std::stod(argv[4]);
      series::Band band;
      band.low = std::stod(argv[5]);
      band.high = std::stod(argv[6]);
      const auto t0 = clock_type::now();
      const Eigen::MatrixXd resid = series::regress_out(x, c, -1, {});
      const double t_regress = since(t0);
      const auto t1 = clock_type::now();
      const Eigen::MatrixXd filtered = series::band_limit(resid, band, series::FilterOptions{}, tr, "filter");
      const double t_filter = since(t1);
      const auto t2 = clock_type::now();
      const connectivity::Shrunk lw = connectivity::ledoit_wolf(filtered);
      const Eigen::MatrixXd r = connectivity::covariance_to_correlation(lw.matrix);
      const double t_lw = since(t2);
      std::printf("{\"regress\": %.6f, \"filter\": %.6f, \"ledoit_wolf\": %.6f, \"total\": %.6f, "
                  "\"shrinkage\": %.17g, \"sum\": %.17g}\n",
                  t_regress, t_filter, t_lw, since(t0), lw.intensity, r.sum());
      return 0;
    }
    if (mode == "meg" && argc == 5) {
      const Eigen::MatrixXd x = io::read_table(argv[2], npy).values;
      const double dt = 1.0 / std::stod(argv[3]);
      std::vector<series::Band> bands;
      std::stringstream ss(argv[4]);
      std::string item;
      while (std::getline(ss, item, ',')) {
        series::Band b;
        b.low = std::stod(item.substr(0, item.find(':')));
        b.high = std::stod(item.substr(item.find(':') + 1));
        bands.push_back(b);
      }
      double t_filter = 0, t_analytic = 0, t_wpli = 0, checksum = 0;
      const auto t0 = clock_type::now();
      for (const auto& b : bands) {
        auto t = clock_type::now();
        const Eigen::MatrixXd f = series::band_limit(x, b, series::FilterOptions{}, dt, "band");
        t_filter += since(t);
        t = clock_type::now();
        const Eigen::MatrixXcd z = series::analytic_signal(f);
        t_analytic += since(t);
        t = clock_type::now();
        checksum += connectivity::phase_coupling(z, connectivity::PhaseMeasure::weighted_lag_index).sum();
        t_wpli += since(t);
      }
      std::printf("{\"filter\": %.6f, \"analytic\": %.6f, \"wpli\": %.6f, \"total\": %.6f, \"sum\": %.17g}\n",
                  t_filter, t_analytic, t_wpli, since(t0), checksum);
      return 0;
    }
    std::cerr << "usage: bench_signals fmri SERIES.npy CONFOUNDS.npy TR LOW HIGH | meg SERIES.npy FS BANDS\n";
    return 2;
  } catch (const std::exception& e) {
    std::cerr << "bench_signals: " << e.what() << "\n";
    return 1;
  }
}
