// A simulated study on disk, from the demo cohort model (core/simulate/cohort_model), in one
// of two layouts:
//  - "tsv": every subject's time series as TSV, a manifest and a ready-to-run cohort config;
//  - "bids": the same subjects as a preprocessing pipeline's derivatives (4-D NIfTI-1
//    images, an atlas, confounds tables, JSON sidecars, participants.tsv), plus a manifest
//    of image and atlas rows that `critplex cohort` runs as it is.
// Invented data, for the demo, the tests and power analysis.
#pragma once

#include <string>

#include "base/options.hpp"
#include "simulate/cohort_model.hpp"

namespace critplex::pipeline {

// options: the cohort model's keys (core/simulate/cohort_model.hpp) plus
//   "design"   "two_groups" (default) or "crossover" (tsv only; write_crossover_study),
//   "config"   the subject config to write as cohort_config.json (default: the demo
//              analysis; for "bids" with motion, white matter and CSF regressors added),
//   "layout"   "tsv" (default) or "bids",
//   "sessions" bids only: sessions per subject, 0 (default) = no session level, at most 99,
//   "block"    bids only: voxels along each side of a region's cube, 1..8 (default 2).
// tsv writes <dir>/timeseries/sub-<id>_timeseries.tsv, <dir>/manifest.tsv,
// <dir>/cohort_config.json and <dir>/model.json into dir (created if missing).
// bids is described at write_bids_study. Returns a summary.
Json write_simulated_study(const Json& options, const std::string& dir);

// The analysis the demo runs: band-pass 0.01-0.1 Hz, Pearson, sweep to density 0.4 with
// Betti curves to dimension 2 and curvature, degree-preserving rewiring as the null.
Json demo_analysis_config();

// model.json: the model, every subject's drawn parameters and a note that the data are invented.
Json model_document(const simulate::CohortModel& model, const simulate::CohortPlan& plan);

// A series as the tsv layout writes it: a header of region names, one row per frame.
std::string series_tsv(const series::Series& s);

// The crossover form (tsv layout): the first group's subjects are volunteers scanned in two
// sessions named after the two groups (e.g. rested, deprived); the second session adds the
// groups' difference in global_mean to the volunteer's global strength, plus a small
// day-to-day change. Each session has its own signals (its own seed) and an invented
// sleepiness rating (1-9). The manifest has subject, session, group ("volunteers"),
// timeseries, age and sleepiness. Invented data.
Json write_crossover_study(const simulate::CohortModel& model, Json config, const std::string& dir);

struct BidsStudyOptions {
  std::size_t sessions = 0;  // 0: sub-<label>/func; n: sub-<label>/ses-01..ses-n/func
  int block = 2;             // a region is a cube of block^3 voxels of 4 mm
};

// The BIDS layout (BIDS 1.9 naming). dir must not exist or be empty; everything is written
// into a sibling temporary folder that is renamed to dir at the end, so a failure leaves
// nothing behind.
//   dir/dataset_description.json, README, participants.tsv (+ .json), .bidsignore
//   dir/derivatives/critplex-simulate/
//     dataset_description.json (DatasetType derivative, GeneratedBy), participants.tsv
//     space-sleeplab_desc-demoatlas_dseg.nii.gz (+ _dseg.tsv: index, name)
//     sub-<label>/[ses-<label>/]func/sub-<label>[_ses-<label>]_task-rest_
//       space-sleeplab_desc-preproc_bold.nii.gz (+ .json: RepetitionTime, TaskName)
//       desc-confounds_timeseries.tsv (+ .json; n/a in the first row of difference columns)
//   dir/manifest.tsv (or manifest_ses-<label>.tsv per session), cohort_config.json, model.json
// Each region's voxels carry baseline + 10 x the model's series + voxel noise whose sum
// over the region is zero at every frame, so the regional mean is the model's series up
// to an affine map and the int16 rounding. Session 01 (or the only run) of a subject is
// the tsv layout's series for the same model and seed.
Json write_bids_study(const simulate::CohortModel& model, const BidsStudyOptions& layout, Json config,
                      const std::string& dir);

}  // namespace critplex::pipeline
