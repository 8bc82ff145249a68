% The MEX binding (run under GNU Octave) against Octave's own corr() on real fMRI region
% time series (nitime's data/fmri_timeseries.csv, Debian python3-nitime).
X = dlmread(getenv('NITIME_CSV'), ',', 1, 0);
R = critplex_connect(X);
% reference: corr (GNU Octave statistics in core), Pearson
assert(max(abs(R(:) - reshape(corr(X), [], 1))) < 1e-12);
[~, info] = critplex_connect(X, struct('fisher_z', true));
assert(info.fisher_z == true);
try
  critplex_connect(X, '{"methd": "pearson"}');
  error('expected an error');
catch err
  assert(~isempty(strfind(err.message, 'unknown option')));
end
curves = critplex_sweep(R, struct('max_density', 0.2, 'grid', 0.05));
assert(numel(curves.density) == 5);
assert(all(diff(curves.edges) >= 0));
printf('MATLAB/Octave binding ok: %s\n', critplex_mex('version'));
