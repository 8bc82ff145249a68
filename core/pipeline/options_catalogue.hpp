// Every option table of the library in one list, in the order a user meets them
// (reading, connecting, sweeping, nulls, a subject, a cohort, the comparison, the
// report, the simulators). `critplex options`, cpx_options_schema and docs/options.md
// are printed from it, so the reference cannot drift from the parsers.
#pragma once

#include <vector>

#include "base/option_schema.hpp"

namespace critplex::pipeline {

const std::vector<const OptionSection*>& all_option_sections();

// The catalogue as JSON (base/option_schema.hpp: schema_json), or one section of it
// when `name` is given (ErrorKind::argument naming the known sections otherwise).
Json options_schema(const std::string& name = "");

}  // namespace critplex::pipeline
