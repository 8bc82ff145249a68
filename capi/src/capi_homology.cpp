// Homology: the persistence bars of a sweep run with a "homology" section, as a
// numeric table (the same bars are in cpx_sweep_json, section "homology").
#include <cmath>
#include <limits>
#include <memory>

#include "guard.hpp"
#include "base/options.hpp"
#include "handles.hpp"

using namespace critplex;
using namespace critplex::capi;

namespace {

Json homology_section(const cpx_sweep* sweep) {
  return sweep_section(sweep, "homology", "a \"homology\" section");
}

double number_or(const Json& v, double missing) { return v.is_number() ? v.get<double>() : missing; }

}  // namespace

extern "C" {

cpx_status cpx_sweep_bars(const cpx_sweep* sweep, int dimension, cpx_layout layout, double* buffer,
                          size_t buffer_length, size_t* bars) {
  return guard("cpx_sweep_bars", [&] {
    require_pointer(sweep, "sweep");
    require_pointer(bars, "bars");
    check_layout(layout);
    if (dimension < -1) fail(ErrorKind::argument, "argument 'dimension' must be -1 (all) or >= 0, got " + std::to_string(dimension));
    const Json section = homology_section(sweep);
    std::vector<const Json*> chosen;
    for (const auto& b : section["bars"])
      if (dimension < 0 || b["dimension"].get<int>() == dimension) chosen.push_back(&b);
    *bars = chosen.size();
    if (buffer == nullptr) return;
    constexpr std::size_t columns = CPX_BAR_COLUMNS;
    if (buffer_length < chosen.size() * columns)
      fail(ErrorKind::argument, "argument 'buffer_length' is " + std::to_string(buffer_length) + " but " +
                                    std::to_string(chosen.size()) + " bars need " +
                                    std::to_string(chosen.size() * columns) + " doubles");
    const double inf = std::numeric_limits<double>::infinity(), nan = std::nan("");
    for (std::size_t i = 0; i < chosen.size(); ++i) {
      const Json& b = *chosen[i];
      const double row[columns] = {b["dimension"].get<double>(),        b["birth_rank"].get<double>(),
                                   number_or(b["death_rank"], inf),     b["birth_density"].get<double>(),
                                   number_or(b["death_density"], inf),  number_or(b["birth_threshold"], nan),
                                   number_or(b["death_threshold"], nan)};
      for (std::size_t c = 0; c < columns; ++c)
        buffer[layout == CPX_ROW_MAJOR ? i * columns + c : c * chosen.size() + i] = row[c];
    }
  });
}

}  // extern "C"
