function [curves, result, bars, kappa] = critplex_sweep(M, options, names)
% CRITPLEX_SWEEP  Density sweep: the topology of a network grown edge by edge.
%   curves = critplex_sweep(M, options) enters the edges of the symmetric matrix M in
%   order of decreasing weight and returns a struct of column vectors on the density grid:
%   density, threshold, edges, chi, cliques_k, and when asked betti_k, kappa_* and
%   forman_* summaries, log_abs_chi (-Inf where chi is 0). options: struct or JSON text
%   (docs/options.md: sweep), e.g. struct('max_density', 0.3, 'grid', 0.01).
%   [curves, result, bars, kappa] = critplex_sweep(M, options, names) also returns the
%   whole result decoded from JSON (exact counts are decimal text there), the persistence
%   bars as a struct of columns (dimension, birth_rank, death_rank, birth_density,
%   death_density, birth_threshold, death_threshold; Inf for a bar that never dies) when
%   options ask for homology, and node curvature (points x regions) when they ask for
%   curvature. names: region names as a cell array of text.
  if nargin < 2, options = ''; end
  if nargin < 3, names = {}; end
  text = options_text(options);
  asked = struct();
  if ~isempty(text), asked = jsondecode(text); end
  want_bars = nargout > 2 && isfield(asked, 'homology');
  want_kappa = nargout > 3 && isfield(asked, 'curvature');
  out = cell(1, max(2, min(nargout + 1, 5)));
  [out{:}] = critplex_mex('sweep', double(M), text, names, want_bars, want_kappa);
  curves = struct();
  for j = 1:numel(out{1})
    curves.(out{1}{j}) = out{2}(:, j);
  end
  if nargout > 1, result = jsondecode(out{3}); end
  bars = [];
  kappa = [];
  if want_bars
    columns = {'dimension', 'birth_rank', 'death_rank', 'birth_density', 'death_density', ...
               'birth_threshold', 'death_threshold'};
    bars = struct();
    for j = 1:numel(columns)
      bars.(columns{j}) = out{4}(:, j);
    end
  end
  if want_kappa, kappa = out{5}; end
end
