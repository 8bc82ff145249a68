function [R, info] = critplex_connect(X, options)
% CRITPLEX_CONNECT  Connectivity matrix of regional time series X (time points x regions).
%   R = critplex_connect(X) gives the Pearson correlation matrix.
%   [R, info] = critplex_connect(X, options) takes options as a struct or JSON text,
%   e.g. struct('method', 'ledoit_wolf'); info describes the estimate (shrinkage, ...).
%   Research software, not a medical device: not for clinical decisions.
  if nargin < 2, options = ''; end
  if isstruct(options), options = jsonencode(options); end
  [R, info_json] = critplex_mex('connect', double(X), options);
  info = jsondecode(info_json);
end
