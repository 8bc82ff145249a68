// Finding the runs of a preprocessed BIDS derivatives folder: every
// sub-<label>/[ses-<label>/]func/*_desc-preproc_bold image (NIfTI-1/2 .nii/.nii.gz, CIFTI-2
// .dtseries.nii/.ptseries.nii; CIFTI series may also carry no desc), its JSON sidecar
// (same name, .json; for CIFTI also .dtseries.json/.ptseries.json; sidecars higher up
// apply by the BIDS inheritance principle) and its confounds table
// (the run's entities without space/res/den/desc, then desc-confounds_timeseries.tsv).
// Filters by participant, session, task and space. Reading only; nothing is written.
#pragma once

#include <map>
#include <string>
#include <vector>

#include "base/options.hpp"
#include "dataset/bids_names.hpp"

namespace critplex::dataset {

struct RunFilter {
  std::vector<std::string> participants;  // labels without "sub-" (empty: all)
  std::vector<std::string> sessions;      // labels without "ses-" (empty: all)
  std::string task, space;                // "" = any
};

struct Run {
  BidsName name;              // of the image
  std::string image;          // path
  std::string sidecar;        // path of the JSON sidecar beside the image (may not exist)
  std::vector<std::string> inherited;  // other applicable sidecars (BIDS inheritance), top level first
  std::string confounds;      // path of the confounds table (may not exist; checked when needed)
  std::string folder;         // relative output folder: sub-<l>[/ses-<l>]/func
  std::string subject() const { return name.get("sub"); }
  std::string session() const { return name.get("ses"); }
};

// Every run of `derivatives_dir` that passes the filter, sorted by path. An empty result
// is an error naming the folder and the filter. Labels in the filter may be given with or
// without their "sub-"/"ses-" prefix.
std::vector<Run> find_runs(const std::string& derivatives_dir, RunFilter filter);

// RepetitionTime (seconds) from the run's sidecars, merged by the BIDS inheritance principle
// (a file lower in the tree, or naming more entities, overrides); `source` names the file
// the value came from. Errors name the sidecar.
struct RepetitionTime {
  double seconds = 0.0;
  std::string source;
};
RepetitionTime sidecar_repetition_time(const Run& run);

// participants.tsv of the dataset (the derivatives folder's, else the raw dataset's two
// levels up): participant label (without "sub-") -> column -> cell. Empty when there is none.
struct Participants {
  std::string path;  // "" when no table was found
  std::vector<std::string> columns;  // besides participant_id
  std::map<std::string, std::map<std::string, std::string>> rows;
};
Participants read_participants(const std::string& derivatives_dir);

}  // namespace critplex::dataset
