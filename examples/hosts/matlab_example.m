% critplex from MATLAB or GNU Octave: build the gateway once with
%   mex plugins/matlab/critplex_mex.c -lcritplex        (Octave: mkoctfile --mex ...)
% and add plugins/matlab to the path.
X = dlmread('examples/demo-output/study/timeseries/sub-rested01_timeseries.tsv', '\t', 1, 0);
[R, info] = critplex_connect(X, struct('method', 'oas'));
curves = critplex_sweep(R, struct('max_density', 0.4, 'grid', 0.02));
plot(curves.density, curves.chi); xlabel('edge density'); ylabel('Euler characteristic');
