function path = critplex_report(dir, options)
% CRITPLEX_REPORT  HTML report of a group comparison.
%   path = critplex_report(dir) writes the self-contained HTML report (inline SVG) of
%   the compared cohort folder dir to dir/report.html and returns its path. options:
%   struct('out', FILE, 'created', TEXT) (docs/outputs.md: report).
  if nargin < 2, options = ''; end
  path = critplex_mex('report', dir, options_text(options));
end
