% The MATLAB/Octave binding (critplex_*.m over the MEX gateway), run under GNU Octave in
% the suite; MATLAB runs it unchanged. Needs critplex_mex built (critplex_build_mex) and
% plugins/matlab on the path. NITIME_CSV: nitime's data/fmri_timeseries.csv (Debian
% python3-nitime), real resting-state fMRI region time series.

% ABI check and version
[version, abi] = critplex_version();
assert(abi == 1);
assert(~isempty(regexp(version, '^\d+\.\d+\.\d+$', 'once')));

% Connect against corr / corrcoef, region names kept.
csv = getenv('NITIME_CSV');
X = dlmread(csv, ',', 1, 0);
f = fopen(csv, 'r');
header = strsplit(strtrim(fgetl(f)), ',');
fclose(f);
header = regexprep(header, '"', '');
[R, info, names] = critplex_connect(X, '', header);
% reference: corrcoef (MATLAB and Octave core), Pearson
assert(max(abs(R(:) - reshape(corrcoef(X), [], 1))) < 1e-12);
if exist('corr', 'file') || exist('corr', 'builtin')
  % reference: corr (Octave core; MATLAB Statistics Toolbox), Pearson
  assert(max(abs(R(:) - reshape(corr(X), [], 1))) < 1e-12);
end
assert(isequal(names, header));
assert(strcmp(info.method, 'pearson'));
assert(info.frames_used == size(X, 1));
[~, ~, default_names] = critplex_connect(X(:, 1:3));
assert(isequal(default_names, {'R1', 'R2', 'R3'}));

% Options as a struct or as JSON text; Fisher z equals atanh of the correlation.
Z = critplex_connect(X, struct('fisher_z', true));
Z2 = critplex_connect(X, '{"fisher_z": true}');
assert(isequal(Z, Z2));
off = ~eye(size(Z));
C = corrcoef(X);
% reference: atanh of corrcoef, the Fisher transform (common practice)
assert(max(abs(Z(off) - atanh(C(off)))) < 1e-12);

% A bad option is an error naming it.
failed = false;
try
  critplex_connect(X, struct('methd', 'pearson'));
catch err
  failed = true;
  assert(~isempty(strfind(err.message, 'methd')));
end
assert(failed);

% Inf, -Inf and NaN arrive as they are. A 4-cycle entered first has chi = 0, where
% log|chi| is -Inf; the first grid point has no threshold (NaN); the component that
% never dies has death density Inf.
W = zeros(4);
pairs = [1 2; 2 3; 3 4; 4 1; 1 3; 2 4];
weights = [0.9 0.8 0.7 0.6 0.2 0.1];
for k = 1:6
  W(pairs(k, 1), pairs(k, 2)) = weights(k);
  W(pairs(k, 2), pairs(k, 1)) = weights(k);
end
W = W + eye(4);
[curves, result, bars] = critplex_sweep(W, struct('grid', 'every', 'curvature', struct(), ...
                                                 'homology', struct('max_dimension', 1)));
assert(isequal(curves.chi', [4 3 2 1 0 1 1]));
zero = curves.chi == 0;
assert(isequal(curves.log_abs_chi(zero), -Inf));
assert(max(abs(curves.log_abs_chi(~zero) - log(abs(curves.chi(~zero))))) < 1e-15);
assert(isnan(curves.threshold(1)));
assert(any(bars.dimension == 0 & bars.death_density == Inf));
assert(isfield(result, 'grid'));

% Whole-study calls on a small invented study.
work = tempname();
mkdir(work);
study = critplex_simulate(fullfile(work, 'study'), struct('regions', 12, 'frames', 160, 'seed', 5, ...
  'groups', struct('name', {'rested', 'deprived'}, 'subjects', {3, 3})));
run = critplex_cohort(study.manifest, study.config, fullfile(work, 'results'), struct('workers', 1));
assert(run.done == 6 && run.failed == 0);
comparison = critplex_compare(fullfile(work, 'results'));
assert(numel(comparison.tests.summary) == numel(comparison.document.tests));
assert(isnumeric(comparison.tests.p_value));
report = critplex_report(fullfile(work, 'results'), struct('created', 'test'));
assert(exist(report, 'file') == 2);
one = critplex_subject(struct('id', 'solo', 'timeseries', fullfile(work, 'study', 'timeseries', ...
  'sub-rested01_timeseries.tsv'), 'sweep', struct('max_density', 0.3, 'grid', 0.05)));
assert(numel(one.curves.density) == 7);
rmdir(work, 's');

fprintf('MATLAB/Octave binding ok: critplex %s\n', version);

