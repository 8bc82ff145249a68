// Prints the option tables the parsers read (core/**/options*.cpp and friends) as one JSON
// document, for docs/gen_options.py. A stand-in until the command line has its own
// catalogue call; keep the list in step with every OptionSection in core.
#include <iostream>

#include "base/option_schema.hpp"
#include "cliques/counts.hpp"
#include "cohort/options.hpp"
#include "connectivity/connect.hpp"
#include "curvature/on_grid.hpp"
#include "homology/persistence.hpp"
#include "io/files.hpp"
#include "io/nifti.hpp"
#include "pipeline/cohort.hpp"
#include "pipeline/compare.hpp"
#include "pipeline/nulls.hpp"
#include "pipeline/subject.hpp"
#include "pipeline/sweep.hpp"
#include "simulate/rewire.hpp"
#include "simulate/surrogates.hpp"
#include "transitions/analysis.hpp"
#include "transitions/random_graph.hpp"

int main() {
  using namespace critplex;
  const std::vector<const OptionSection*> sections{
      &connectivity::connect_option_section(), &connectivity::clean_option_section(),
      &connectivity::censor_option_section(),  &connectivity::filter_option_section(),
      &io::image_option_section(),             &io::matrix_write_option_section(),
      &pipeline::sweep_option_section(),       &pipeline::grid_option_section(),
      &cliques::option_section(),              &homology::option_section(),
      &curvature::option_section(),            &transitions::option_section(),
      &transitions::expectation_option_section(),
      &pipeline::subject_option_section(),     &pipeline::null_option_section(),
      &pipeline::cohort_option_section(),      &pipeline::compare_option_section(),
      &pipeline::report_option_section(),      &cohort::permutation_option_section(),
      &cohort::bootstrap_option_section(),     &cohort::cluster_option_section(),
      &simulate::surrogate_option_section(),   &simulate::rewire_option_section()};
  std::cout << schema_json(sections).dump(1) << "\n";
  return 0;
}
