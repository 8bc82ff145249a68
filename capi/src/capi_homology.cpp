// Homology: the persistence bars of a sweep run with a "homology" section, as a
// numeric table (the same bars are in cpx_sweep_json, section "homology").
#include <cmath>
#include <limits>

#include "guard.hpp"
#include "handles.hpp"

using namespace critplex;
using namespace critplex::capi;

extern "C" {

cpx_status cpx_sweep_bars(const cpx_sweep* sweep, int dimension, cpx_layout layout, double* buffer,
                          size_t buffer_length, size_t* bars) {
  return guard("cpx_sweep_bars", [&] {
    require_pointer(sweep, "sweep");
    require_pointer(bars, "bars");
    check_layout(layout);
    if (dimension < -1) fail(ErrorKind::argument, "argument 'dimension' must be -1 (all) or >= 0, got " + std::to_string(dimension));
    if (!sweep->value.homology) engine_missing("a \"homology\" section");
    const homology::Result& h = *sweep->value.homology;
    const filtration::Filtration& f = sweep->value.filtration;
    std::vector<const homology::Bar*> chosen;
    for (const auto& b : h.bars)
      if (dimension < 0 || b.dimension == dimension) chosen.push_back(&b);
    *bars = chosen.size();
    if (buffer == nullptr) return;
    constexpr std::size_t columns = CPX_BAR_COLUMNS;
    if (buffer_length < chosen.size() * columns)
      fail(ErrorKind::argument, "argument 'buffer_length' is " + std::to_string(buffer_length) + " but " +
                                    std::to_string(chosen.size()) + " bars need " +
                                    std::to_string(chosen.size() * columns) + " doubles");
    const double inf = std::numeric_limits<double>::infinity(), nan = std::nan("");
    auto threshold = [&](std::size_t rank) { return rank == 0 ? nan : f.edges[rank - 1].value; };
    for (std::size_t i = 0; i < chosen.size(); ++i) {
      const homology::Bar& b = *chosen[i];
      const double row[columns] = {static_cast<double>(b.dimension),
                                   static_cast<double>(b.birth_rank),
                                   b.essential ? inf : static_cast<double>(b.death_rank),
                                   homology::rank_density(f, b.birth_rank),
                                   b.essential ? inf : homology::rank_density(f, b.death_rank),
                                   threshold(b.birth_rank),
                                   b.essential ? nan : threshold(b.death_rank)};
      for (std::size_t c = 0; c < columns; ++c)
        buffer[layout == CPX_ROW_MAJOR ? i * columns + c : c * chosen.size() + i] = row[c];
    }
  });
}

}  // extern "C"
