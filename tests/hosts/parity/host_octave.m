function host_octave(manifest, config, out, table_path)
% HOST_OCTAVE  Parity run in MATLAB/Octave: cohort, compare and report through the
%   critplex_*.m functions, then the group-test table as this host holds it, written to
%   table_path.
  run = critplex_cohort(manifest, config, out);
  assert(run.failed == 0);
  comparison = critplex_compare(out, struct('covariates', {{'age'}}));
  report = critplex_report(out, struct('created', 'parity'));
  assert(exist(report, 'file') == 2);
  tests = comparison.tests;
  names = fieldnames(tests);
  rows = numel(tests.(names{1}));
  f = fopen(table_path, 'w');
  fprintf(f, '%s\n', strjoin(names', sprintf('\t')));
  for i = 1:rows
    cells = cell(1, numel(names));
    for j = 1:numel(names)
      v = tests.(names{j});
      if iscell(v)
        cells{j} = v{i};
      elseif islogical(v)
        cells{j} = mat2str(v(i));
      elseif isnan(v(i))
        cells{j} = 'n/a';
      else
        cells{j} = sprintf('%.17g', v(i));
      end
    end
    fprintf(f, '%s\n', strjoin(cells, sprintf('\t')));
  end
  fclose(f);
  fprintf('octave: %d tests, report %s\n', rows, report);
end
