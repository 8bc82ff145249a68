function result = critplex_subject(config, out_dir)
% CRITPLEX_SUBJECT  One subject from time series to topology.
%   result = critplex_subject(config) runs a subject config (docs/options.md: subject),
%   given as a struct or JSON text, through connectivity, the sweep and the null model.
%   result.document is the subject document decoded from JSON; result.curves is a struct
%   of column vectors (the first band's grid curves); result.bands holds every band.
%   critplex_subject(config, out_dir) also writes the document and its TSV twins into the
%   existing folder out_dir.
  if nargin < 2, out_dir = ''; end
  document = jsondecode(critplex_mex('subject', options_text(config), out_dir));
  result = struct('subject', document.subject, 'document', document);
  result.bands = document.bands;
  band = document.bands(1);
  if iscell(band), band = band{1}; end
  result.curves = band.curves;
end
