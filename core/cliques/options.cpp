#include "base/error.hpp"
#include "cliques/counts.hpp"

namespace critplex::cliques {

const OptionSection& option_section() {
  static const OptionSection section{
      "sweep.cliques",
      "sweep options",
      "cpx_sweep_run, critplex sweep --options, the subject config's \"sweep\"",
      "Exact clique counts and the Euler characteristic. On by default; false turns the engine off.",
      {{.key = "max_dimension", .type = "integer", .default_value = -1, .default_note = "-1 = none", .min = -1,
        .max = 1000000,
        .meaning = "count only cliques of dimension <= K; counts up to K stay exact, chi is exact only until the "
                   "first larger clique forms"},
       {.key = "max_work", .type = "number", .default_value = 0.0, .default_note = "0 = none", .min = 0,
        .meaning = "stop after about this many nodes of the counting tree; everything up to the last complete "
                   "grid point is returned"},
       {.key = "threads", .type = "integer", .default_value = 0, .default_note = "0 = every core", .min = 0,
        .max = 4096, .meaning = "worker threads; results are identical for any value"},
       {.key = "chi_only", .type = "boolean", .default_value = false,
        .meaning = "only chi (and Cl_0, Cl_1): much faster, since chi needs only part of the counting tree"},
       {.key = "node_counts", .type = "boolean", .default_value = false,
        .meaning = "also Cl_{i,k}, the k-simplices containing region i, per grid point (JSON only)"},
       {.key = "max_density", .type = "number", .default_note = "the sweep's max_density when given; else 0.5 above 100 regions, 1 up to 100", .min = 0,
        .max = 1, .min_open = true,
        .meaning = "this engine's own range (chi): counts stop at the last grid point at or below it (columns beyond "
                   "are n/a). The default keeps chi cheap at every parcellation size: at 1000 regions chi past 0.5 "
                   "can cost minutes, while up to 100 regions every engine over the whole range takes seconds "
                   "(docs/performance.md)"},
       {.key = "counts_max_density", .type = "number", .default_note = "the sweep's max_density when given; else 0.1 above 100 regions, 1 up to 100; never past max_density", .min = 0,
        .max = 1, .min_open = true,
        .meaning = "range of the every-size counts Cl_k (k >= 2); from there to max_density the engine counts chi "
                   "only (cliques_k columns n/a). Clique counts grow combinatorially with density: at 1000 regions "
                   "they take about 1 s to 0.1 and over 40 s to 0.2"},
       {.key = "max_seconds", .type = "number", .default_value = 0.0, .default_note = "0 = none", .min = 0,
        .meaning = "stop when this much wall time is spent; everything up to the last complete grid point is "
                   "returned and the result says so (stopped_by \"max_seconds\"); unlike max_work, where it stops "
                   "depends on the machine"}}};
  return section;
}

Options parse_options(const Json& section) {
  Options o;
  if (section.is_null()) return o;
  if (!section.is_object()) fail(ErrorKind::argument, "sweep options: \"cliques\" must be an object (or false)");
  SchemaReader r(section, option_section());
  o.max_dimension = static_cast<int>(r.integer("max_dimension"));
  o.max_work = r.number("max_work");
  o.threads = static_cast<int>(r.integer("threads"));
  o.node_counts = r.boolean("node_counts");
  o.chi_only = r.boolean("chi_only");
  o.max_density = r.optional_number("max_density");
  o.counts_max_density = r.optional_number("counts_max_density");
  o.max_seconds = r.number("max_seconds");
  r.finish();
  if (o.chi_only && o.counts_max_density)
    fail(ErrorKind::argument, "sweep options: cliques.chi_only and cliques.counts_max_density exclude each other "
                              "(chi_only counts no clique size beyond edges)");
  if (o.chi_only && o.node_counts)
    fail(ErrorKind::argument,
         "sweep options: cliques.chi_only and cliques.node_counts exclude each other (node counts need every clique size)");
  return o;
}

}  // namespace critplex::cliques
