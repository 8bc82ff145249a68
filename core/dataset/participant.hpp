// Dataset mode, participant level: every preprocessed run of a BIDS derivatives folder
// through the subject pipeline, outputs written as a BIDS derivatives dataset:
//   OUT/dataset_description.json
//   OUT/sub-<l>/[ses-<l>/]func/<run entities>_atlas-<a>_desc-<band>_connectivity.tsv (+ .json)
//                                  ..._curves.tsv, ..._transitions.tsv (+ .json each)
//   OUT/sub-<l>/[ses-<l>/]func/<run entities>_atlas-<a>_topology.json (the subject document)
// The run entities are the image's without desc (sub, ses, task, acq, run, space, ...).
// Everything that can be checked before any work (sidecars, confounds tables, config) is
// checked first, so bad input leaves no output; a run that fails later is reported and
// the others go on.
#pragma once

#include <string>
#include <vector>

#include "base/option_schema.hpp"
#include "dataset/layout.hpp"
#include "pipeline/sweep.hpp"

namespace critplex::dataset {

struct ParticipantOptions {
  std::string atlas, atlas_labels, atlas_label;  // atlas_label: the atlas- entity ("" = from the atlas file name)
  RunFilter filter;
  Json config = Json::object();  // shared subject config (connect, sweep, null, read)
  bool dry_run = false;
  bool force = false;  // recompute runs whose inputs and options are unchanged
};
const OptionSection& participant_option_section();
ParticipantOptions parse_participant_options(const Json& options);

// Runs (or, with dry_run, lists) the participant level. Returns a summary:
// {"level", "dry_run", "runs": [{"image", "subject", "session", "status", "message",
// "outputs", "repetition_time", "seconds"}], "warnings": [...], "done", "skipped", "failed"}.
Json run_participant_level(const std::string& derivatives_dir, const std::string& out_dir,
                           const ParticipantOptions& options, const pipeline::ProgressFn& progress);

// The atlas- label used for an atlas file: its atlas- entity, else its desc- entity,
// else the letters and digits of its name before the first '.'.
std::string atlas_label_of(const std::string& atlas_path);

}  // namespace critplex::dataset
