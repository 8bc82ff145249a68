function comparison = critplex_compare(dir, options)
% CRITPLEX_COMPARE  Group comparison of a cohort run.
%   comparison = critplex_compare(dir, options) compares the groups of the finished
%   subjects in dir (docs/options.md: compare; e.g. struct('covariates', {{'age'}})) and
%   writes group_comparison.json and group_tests.tsv there. comparison.tests is the
%   group-test table as a struct of columns (numbers as double vectors, NaN where a test
%   has no value); comparison.document is the whole comparison decoded from JSON.
%   The tests describe groups of study volunteers, never a decision about anyone.
  if nargin < 2, options = ''; end
  document = jsondecode(critplex_mex('compare', dir, options_text(options)));
  comparison = struct('dir', dir, 'tests', read_tsv_columns(fullfile(dir, 'group_tests.tsv')), ...
                      'document', document);
end
