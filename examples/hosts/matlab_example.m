% critplex from MATLAB or GNU Octave. Build the gateway once against an installed prefix:
%   addpath('PREFIX/share/critplex/matlab'); critplex_build_mex('', 'PREFIX');
study = critplex_simulate(fullfile(tempdir, 'sleep-lab'), struct('regions', 20, 'frames', 200, ...
  'groups', struct('name', {'rested', 'deprived'}, 'subjects', {4, 4})));   % invented data
X = dlmread(fullfile(tempdir, 'sleep-lab', 'timeseries', 'sub-rested01_timeseries.tsv'), '\t', 1, 0);
[R, info] = critplex_connect(X, struct('method', 'oas'));
curves = critplex_sweep(R, struct('max_density', 0.4, 'grid', 0.02));
plot(curves.density, curves.chi); xlabel('edge density'); ylabel('Euler characteristic');
critplex_cohort(study.manifest, study.config, fullfile(tempdir, 'sleep-lab', 'results'));
comparison = critplex_compare(fullfile(tempdir, 'sleep-lab', 'results'));
disp([comparison.tests.summary, num2cell(comparison.tests.p_value)]);
critplex_report(fullfile(tempdir, 'sleep-lab', 'results'));
