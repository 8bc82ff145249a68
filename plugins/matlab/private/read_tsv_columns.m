function columns = read_tsv_columns(path)
% READ_TSV_COLUMNS  A TSV file with a header row as a struct of columns: numeric columns
%   as double vectors (n/a, NA and NaN as NaN; Infinity and -Infinity as Inf and -Inf),
%   true/false columns as logical vectors, anything else as a cell array of text.
  text = fileread(path);
  lines = strsplit(text, char(10));
  lines = regexprep(lines, char(13), '');
  lines = lines(~cellfun(@isempty, lines));
  header = strsplit(lines{1}, char(9));
  cells = cell(numel(lines) - 1, numel(header));
  for i = 2:numel(lines)
    row = strsplit(lines{i}, char(9));
    if numel(row) ~= numel(header)
      error('critplex:parse', 'critplex: %s line %d has %d cells, the header %d', path, i, numel(row), numel(header));
    end
    cells(i - 1, :) = row;
  end
  columns = struct();
  for j = 1:numel(header)
    columns.(matlab.lang.makeValidName(header{j})) = convert_column(cells(:, j));
  end
end

function values = convert_column(cells)
  missing = ismember(cells, {'n/a', 'NA', 'NaN', ''});
  numbers = str2double(cells);
  numbers(strcmp(cells, 'Infinity')) = Inf;
  numbers(strcmp(cells, '-Infinity')) = -Inf;
  numbers(missing) = NaN;
  if all(~isnan(numbers) | missing)
    values = numbers;
  elseif all(ismember(cells, {'true', 'false'}) | missing) && ~any(missing)
    values = strcmp(cells, 'true');
  else
    values = cells;
  end
end
