#include "pipeline/options_catalogue.hpp"

#include "cliques/counts.hpp"
#include "cohort/designs.hpp"
#include "cohort/options.hpp"
#include "connectivity/connect.hpp"
#include "dataset/group.hpp"
#include "dataset/participant.hpp"
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

namespace critplex::pipeline {

const std::vector<const OptionSection*>& all_option_sections() {
  static const std::vector<const OptionSection*> sections{
      &io::image_option_section(),
      &io::matrix_write_option_section(),
      &connectivity::connect_option_section(),
      &connectivity::clean_option_section(),
      &connectivity::censor_option_section(),
      &connectivity::filter_option_section(),
      &sweep_option_section(),
      &grid_option_section(),
      &cliques::option_section(),
      &homology::option_section(),
      &curvature::option_section(),
      &transitions::option_section(),
      &transitions::expectation_option_section(),
      &null_option_section(),
      &subject_option_section(),
      &cohort_option_section(),
      &compare_option_section(),
      &cohort::design_option_section(),
      &cohort::permutation_option_section(),
      &cohort::bootstrap_option_section(),
      &cohort::cluster_option_section(),
      &report_option_section(),
      &dataset::participant_option_section(),
      &dataset::group_option_section(),
      &simulate::surrogate_option_section(),
      &simulate::rewire_option_section(),
  };
  return sections;
}

Json options_schema(const std::string& name) {
  if (name.empty()) return schema_json(all_option_sections());
  std::string known;
  for (const OptionSection* section : all_option_sections()) {
    if (section->name == name) return schema_json({section});
    known += (known.empty() ? "" : ", ") + section->name;
  }
  fail(ErrorKind::argument, "no option section named \"" + name + "\"; the sections are " + known);
}

}  // namespace critplex::pipeline
