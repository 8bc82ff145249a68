#include "base/error.hpp"
#include "homology/persistence.hpp"

namespace critplex::homology {

const OptionSection& option_section() {
  static const OptionSection section{
      "sweep.homology",
      "sweep options",
      "cpx_sweep_run, critplex sweep --options (and --betti K), the subject config's \"sweep\"",
      "Persistence bars and Betti curves of the clique complex over Z/2. On when the section is given.",
      {{.key = "max_dimension", .type = "integer", .default_value = 2, .min = 0, .max = 30,
        .meaning = "bars in dimensions 0..K (simplices of K + 1 are enumerated)"},
       {.key = "max_work", .type = "number", .default_value = 0.0, .default_note = "0 = none", .min = 0,
        .meaning = "budget in cofacets visited; dimensions finished before the stop stay complete"},
       {.key = "threads", .type = "integer", .default_value = 0, .default_note = "0 = every core", .min = 0,
        .max = 1024, .meaning = "threads for enumerating simplices; results do not depend on it"},
       {.key = "max_density", .type = "number", .default_note = "the sweep's max_density when given; else 0.3 above 100 regions, 1 up to 100",
        .min = 0, .max = 1, .min_open = true,
        .meaning = "this engine's own range: bars and Betti curves of the filtration cut at the last grid point at or "
                   "below it (columns beyond are n/a)"}}};
  return section;
}

Options parse_options(const Json& section) {
  const Json object = section.is_null() || (section.is_boolean() && section.get<bool>()) ? Json::object() : section;
  if (!object.is_object()) fail(ErrorKind::argument, "sweep options: \"homology\" must be an object (or true)");
  SchemaReader r(object, option_section());
  Options o;
  o.max_dimension = static_cast<int>(r.integer("max_dimension"));
  o.max_work = r.number("max_work");
  o.threads = static_cast<int>(r.integer("threads"));
  o.max_density = r.optional_number("max_density");
  r.finish();
  return o;
}

}  // namespace critplex::homology
