function [R, info, names] = critplex_connect(X, options, names)
% CRITPLEX_CONNECT  Connectivity matrix of regional time series.
%   R = critplex_connect(X) is the Pearson correlation matrix of X (time points down the
%   rows, regions across the columns; a MATLAB table keeps its variable names).
%   [R, info, names] = critplex_connect(X, options, names) takes options as a struct or
%   JSON text, e.g. struct('method', 'ledoit_wolf') (docs/options.md: connect), and region
%   names as a cell array of text. info is the estimator's report (method, frames used,
%   shrinkage intensity, band); names are the region names of R's rows and columns.
%   Research software, not a medical device: not for clinical decisions.
  if nargin < 2, options = ''; end
  if nargin < 3, names = {}; end
  if exist('istable', 'builtin') || exist('istable', 'file')
    if istable(X)
      if isempty(names), names = X.Properties.VariableNames; end
      X = table2array(X);
    end
  end
  [R, info_json, names] = critplex_mex('connect', double(X), options_text(options), names);
  info = jsondecode(info_json);
end
