function summary = critplex_simulate(dir, options)
% CRITPLEX_SIMULATE  An invented two-group study.
%   summary = critplex_simulate(dir, options) writes a simulated study (invented data:
%   a fictional sleep laboratory) into dir: time series, manifest.tsv, cohort_config.json
%   and model.json (docs/demo-study.md). options: struct with regions, frames, seed,
%   groups, ... summary.manifest and summary.config are the paths to run the cohort.
  if nargin < 2, options = ''; end
  summary = jsondecode(critplex_mex('simulate', dir, options_text(options)));
end
