// Dataset mode: BIDS file names (core/dataset/bids_names). The rules are the BIDS
// specification's, written here from its text: Common principles, "Filenames" (entities as
// <key>-<label> joined by '_', then _<suffix><extension>; labels and suffixes alphanumeric;
// the extension is everything from the first '.') and the entity order of its schema
// (src/schema/rules/entities.yaml; the atlas entity sits after chunk and before seg/res/den,
// desc is last).
#include <catch2/catch.hpp>

#include "base/error.hpp"
#include "dataset/bids_names.hpp"

using namespace critplex;
using namespace critplex::dataset;

TEST_CASE("BIDS names: entities are written in the specification's order", "[dataset]") {
  // Given in scrambled order; the specification's order for these keys (from its entity
  // table): sub, ses, task, acq, ce, rec, dir, run, echo, space, atlas, res, den, desc.
  const Entities scrambled{{"desc", "filtered"}, {"atlas", "demo"}, {"run", "2"}, {"space", "sleeplab"}, {"sub", "01"},
                           {"den", "91k"},       {"task", "rest"},  {"echo", "1"}, {"ses", "a"},        {"acq", "fast"},
                           {"res", "2"},         {"rec", "x"},      {"ce", "gd"},  {"dir", "AP"}};
  CHECK(format_bids_name(scrambled, "curves", ".tsv") ==
        "sub-01_ses-a_task-rest_acq-fast_ce-gd_rec-x_dir-AP_run-2_echo-1_space-sleeplab_atlas-demo_res-2_den-91k_"
        "desc-filtered_curves.tsv");
}

TEST_CASE("BIDS names: labels and suffixes are alphanumeric, keys are entities, each once", "[dataset]") {
  CHECK_THROWS_AS(format_bids_name({{"sub", "01-a"}}, "bold", ".json"), Error);   // '-' in a label
  CHECK_THROWS_AS(format_bids_name({{"sub", "01_a"}}, "bold", ".json"), Error);   // '_' in a label
  CHECK_THROWS_AS(format_bids_name({{"sub", ""}}, "bold", ".json"), Error);       // empty label
  CHECK_THROWS_AS(format_bids_name({{"sub", "01"}}, "co-nn", ".tsv"), Error);     // suffix
  CHECK_THROWS_AS(format_bids_name({{"band", "alpha"}}, "curves", ".tsv"), Error);  // not an entity
  CHECK_THROWS_AS(format_bids_name({{"sub", "01"}, {"desc", "a"}, {"desc", "b"}}, "curves", ".tsv"), Error);
  CHECK(is_bids_label("deprived07"));
  CHECK_FALSE(is_bids_label("0.01"));
  CHECK(label_from("0.01-0.1 Hz") == "00101Hz");
}

TEST_CASE("BIDS names: parsing", "[dataset]") {
  const auto n = parse_bids_name("sub-01_ses-2_task-rest_run-3_space-MNI152NLin2009cAsym_desc-preproc_bold.nii.gz");
  REQUIRE(n);
  CHECK(n->get("sub") == "01");
  CHECK(n->get("ses") == "2");
  CHECK(n->get("run") == "3");
  CHECK(n->get("desc") == "preproc");
  CHECK(n->get("acq").empty());
  CHECK(n->suffix == "bold");
  CHECK(n->extension == ".nii.gz");  // from the first '.'
  const auto cifti = parse_bids_name("sub-01_task-rest_space-fsLR_den-91k_bold.dtseries.nii");
  REQUIRE(cifti);
  CHECK(cifti->extension == ".dtseries.nii");
  CHECK(cifti->get("den") == "91k");
  // Not BIDS names: out of order, unknown key, bad label, no suffix, no extension.
  CHECK_FALSE(parse_bids_name("task-rest_sub-01_bold.nii"));
  CHECK_FALSE(parse_bids_name("sub-01_band-alpha_bold.nii"));
  CHECK_FALSE(parse_bids_name("sub-0_1_bold.nii"));
  CHECK_FALSE(parse_bids_name("sub-01.nii"));
  CHECK_FALSE(parse_bids_name("sub-01_bold"));
  CHECK_FALSE(parse_bids_name("sub-01_sub-02_bold.nii"));
  // A name we format parses back to the same entities.
  const Entities e{{"sub", "x1"}, {"task", "rest"}, {"atlas", "demo"}, {"desc", "filtered"}};
  const auto back = parse_bids_name(format_bids_name(e, "connectivity", ".tsv"));
  REQUIRE(back);
  CHECK(back->entities == e);
}
