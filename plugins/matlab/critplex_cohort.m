function summary = critplex_cohort(manifest, config, out_dir, options)
% CRITPLEX_COHORT  Every subject of a study.
%   summary = critplex_cohort(manifest, config, out_dir) runs every subject of the
%   manifest TSV (subject, group, timeseries, optional confounds and numeric covariates)
%   with the shared config (struct, JSON text or JSON file name) into out_dir (docs/cli.md:
%   critplex cohort). Unchanged finished subjects are skipped; a failing subject is recorded and
%   the others go on. options: struct('workers', 0, 'force', false). summary has the
%   fields done, skipped, failed, seconds and subjects.
  if nargin < 4, options = ''; end
  if ischar(config) && ~isempty(config) && config(1) ~= '{' && exist(config, 'file')
    config = fileread(config);
  end
  summary = jsondecode(critplex_mex('cohort', manifest, options_text(config), out_dir, options_text(options)));
end
