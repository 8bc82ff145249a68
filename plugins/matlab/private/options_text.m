function text = options_text(options)
% OPTIONS_TEXT  Options as JSON text: a struct is encoded, text passes as it is, [] means defaults.
  if nargin < 1 || isempty(options) && ~isstruct(options)
    text = '';
  elseif isstruct(options)
    text = jsonencode(options);
  elseif ischar(options)
    text = options;
  else
    error('critplex:argument', 'critplex: options must be a struct or JSON text');
  end
end
