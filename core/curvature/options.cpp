#include "base/error.hpp"
#include "curvature/on_grid.hpp"

namespace critplex::curvature {

const OptionSection& option_section() {
  static const OptionSection section{
      "sweep.curvature",
      "sweep options",
      "cpx_sweep_run, critplex sweep --options (and --curvature), the subject config's \"sweep\"",
      "Gauss-Bonnet node curvature and Forman-Ricci edge curvature on the grid. On when the section is given "
      "(an object, or true).",
      {{.key = "node_curves", .type = "boolean", .default_value = true,
        .meaning = "per node kappa_i(rho) in the JSON section (node_kappa)"},
       {.key = "forman", .type = "boolean", .default_value = true,
        .meaning = "Forman-Ricci edge curvature, augmented with triangles, unweighted"},
       {.key = "quantiles", .type = "numbers", .default_value = Json::array({0.05, 0.25, 0.5, 0.75, 0.95}), .min = 0,
        .max = 1, .meaning = "quantile levels of the node curvature distribution (columns kappa_q05, ...)"},
       {.key = "bins", .type = "\"auto\" or integer", .default_value = "auto", .min = 1, .max = 100000,
        .meaning = "histogram bins: \"auto\" = Freedman-Diaconis on the values pooled over the grid, or a fixed "
                   "number"},
       {.key = "max_bins", .type = "integer", .default_value = 60, .min = 1, .max = 100000,
        .meaning = "cap on the number of automatic bins"},
       {.key = "range", .type = "numbers", .meaning = "[lo, hi] of the node curvature histogram (fixed bins only)"},
       {.key = "forman_range", .type = "numbers", .meaning = "[lo, hi] of the Forman-Ricci histogram (fixed bins only)"},
       {.key = "max_density", .type = "number", .default_note = "the every-size counts' range (cliques.counts_max_density)", .min = 0, .max = 1,
        .min_open = true,
        .meaning = "this engine's own range; when it differs from cliques.counts_max_density (or with "
                   "cliques.chi_only) a separate full count runs to this density only"},

       {.key = "at", .type = "\"grid\", \"transitions\" or list of densities", .default_value = "grid",
        .meaning = "where node curvature is computed: \"grid\" = every grid point in range (one walk along the "
                   "filtration); a list of densities, each snapped to the last grid point at or below it; "
                   "\"transitions\" = the grid points bracketing each zero of chi (sign change or touch of the "
                   "exact chi curve) and `window` more on either side. Lists and transitions use one static count "
                   "of the graph per point; other points hold missing values. Forman-Ricci stays on every point"},
       {.key = "window", .type = "integer", .default_value = 2, .min = 0, .max = 1000000,
        .meaning = "with \"at\": \"transitions\", grid points kept on either side of the two points that "
                   "bracket a zero of chi (2 gives the shape of the curvature moments across the zero at a "
                   "few static counts per zero)"},
       {.key = "count", .type = "choice", .default_value = "auto", .choices = {"auto", "static", "walk"},
        .meaning = "with a list or \"transitions\": how the chosen points are counted: \"static\" = one count of "
                   "each point's graph in a degeneracy order, \"walk\" = one walk along the filtration to the last "
                   "chosen point, \"auto\" = static unless the chosen points crowd near the last one "
                   "(docs/methods.md, \"Curvature at chosen points\")"}}};
  return section;
}

const char* at_name(Options::At at) {
  switch (at) {
    case Options::At::grid: return "grid";
    case Options::At::list: return "list";
    case Options::At::transitions: return "transitions";
  }
  return "grid";
}

Options parse_options(const Json& section) {
  Options o;
  if (section.is_null() || (section.is_boolean() && section.get<bool>())) return o;
  if (!section.is_object()) fail(ErrorKind::argument, "sweep options: \"curvature\" must be an object (or true)");
  SchemaReader r(section, option_section());
  o.node_curves = r.boolean("node_curves");
  o.forman = r.boolean("forman");
  o.quantile_levels = r.numbers("quantiles");
  if (const Json* b = r.raw("bins")) {
    const OptionKey& e = option_section().entry("bins");
    if (b->is_string() && b->get<std::string>() == "auto") {
      o.auto_bins = true;
    } else if (b->is_number_integer() && static_cast<double>(b->get<long long>()) >= *e.min && static_cast<double>(b->get<long long>()) <= *e.max) {
      o.auto_bins = false;
      o.bins = static_cast<std::size_t>(b->get<long long>());
    } else {
      r.bad("bins", "\"auto\" or an integer in " + range_text(e));
    }
  }
  o.max_bins = static_cast<std::size_t>(r.integer("max_bins"));
  o.node_range = r.numbers("range");
  o.forman_range = r.numbers("forman_range");
  o.max_density = r.optional_number("max_density");
  if (const Json* at = r.raw("at")) {
    const std::string expected = "\"grid\", \"transitions\" or a non-empty list of densities in (0, 1]";
    if (at->is_string() && at->get<std::string>() == "grid") {
      o.at = Options::At::grid;
    } else if (at->is_string() && at->get<std::string>() == "transitions") {
      o.at = Options::At::transitions;
    } else if (at->is_array() && !at->empty()) {
      o.at = Options::At::list;
      for (const Json& x : *at) {
        if (!x.is_number() || !(x.get<double>() > 0.0 && x.get<double>() <= 1.0)) r.bad("at", expected);
        o.at_densities.push_back(x.get<double>());
      }
    } else {
      r.bad("at", expected);
    }
  }
  const bool window_given = r.has("window");
  o.window = static_cast<std::size_t>(r.integer("window"));
  const std::string count = r.choice("count");
  o.count = count == "static" ? Options::Count::static_graph : count == "walk" ? Options::Count::walk : Options::Count::automatic;
  const bool count_given = r.has("count");
  r.finish();
  if (count_given && o.at == Options::At::grid)
    fail(ErrorKind::argument, r.where() + ": \"curvature.count\" applies only with a list or \"transitions\" in \"curvature.at\"");
  if (window_given && o.at != Options::At::transitions)
    fail(ErrorKind::argument, r.where() + ": \"curvature.window\" applies only with \"curvature.at\": \"transitions\"");
  for (const auto* range : {&o.node_range, &o.forman_range})
    if (!range->empty() && (range->size() != 2 || !((*range)[0] < (*range)[1])))
      fail(ErrorKind::argument, r.where() + ": \"curvature.range\" and \"curvature.forman_range\" must be [lo, hi] with lo < hi");
  if (o.auto_bins && (!o.node_range.empty() || !o.forman_range.empty()))
    fail(ErrorKind::argument, r.where() + ": \"curvature.range\" needs a fixed number of bins (\"curvature.bins\": integer)");
  return o;
}

}  // namespace critplex::curvature
