function [curves, result] = critplex_sweep(M, options)
% CRITPLEX_SWEEP  Density sweep of a symmetric matrix M.
%   curves = critplex_sweep(M, options) is a struct of column vectors on the density grid
%   (density, threshold, edges, chi, cliques_k, betti_k, ...). result is the full result
%   decoded from JSON (exact counts are decimal strings there). options: struct or JSON.
  if nargin < 2, options = ''; end
  if isstruct(options), options = jsonencode(options); end
  [tsv, json] = critplex_mex('sweep', double(M), options);
  lines = strsplit(strtrim(tsv), "\n");
  names = strsplit(lines{1}, "\t");
  values = zeros(numel(lines) - 1, numel(names));
  for i = 2:numel(lines)
    values(i - 1, :) = str2double(strsplit(lines{i}, "\t"));
  end
  curves = struct();
  for j = 1:numel(names)
    curves.(names{j}) = values(:, j);
  end
  if nargout > 1, result = jsondecode(json); end
end
