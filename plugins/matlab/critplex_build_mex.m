function mexfile = critplex_build_mex(outdir, prefix)
% CRITPLEX_BUILD_MEX  Compile the critplex MEX gateway against an installed libcritplex.
%   critplex_build_mex() asks pkg-config where critplex is (set PKG_CONFIG_PATH to
%   PREFIX/lib/pkgconfig first, or pass PREFIX) and writes critplex_mex next to this file.
%   critplex_build_mex(OUTDIR) writes it into OUTDIR instead (add OUTDIR to the path).
%   critplex_build_mex(OUTDIR, PREFIX) uses the critplex installed under PREFIX.
%   Works under MATLAB (mex) and GNU Octave (mkoctfile --mex). Returns the file written.
%   The library's folder is recorded in the MEX file (rpath): no LD_LIBRARY_PATH needed.
  here = fileparts(mfilename('fullpath'));
  if nargin < 1 || isempty(outdir), outdir = here; end
  if nargin >= 2 && ~isempty(prefix)
    pcdirs = {fullfile(prefix, 'lib', 'pkgconfig'), fullfile(prefix, 'lib64', 'pkgconfig'), ...
              fullfile(prefix, 'lib', 'x86_64-linux-gnu', 'pkgconfig'), fullfile(prefix, 'share', 'pkgconfig')};
    old = getenv('PKG_CONFIG_PATH');
    setenv('PKG_CONFIG_PATH', strjoin([pcdirs, {old}], pathsep));
    cleanup = onCleanup(@() setenv('PKG_CONFIG_PATH', old));
  end
  cflags = pkg_config('--cflags critplex');
  libs = pkg_config('--libs critplex');
  libdir = pkg_config('--variable=libdir critplex');
  source = fullfile(here, 'critplex_mex.c');
  if ~exist(outdir, 'dir'), mkdir(outdir); end
  if exist('OCTAVE_VERSION', 'builtin')
    mexfile = fullfile(outdir, ['critplex_mex.' mexext()]);
    args = [{'--mex', '-o', mexfile, source}, split_flags(cflags), split_flags(libs), {['-Wl,-rpath,' libdir]}];
    [output, status] = mkoctfile(args{:});
    if status ~= 0
      error('critplex:build', 'critplex: mkoctfile failed:\n%s', output);
    end
  else
    args = [{'-outdir', outdir, source}, split_flags(cflags), split_flags(libs), ...
            {['LDFLAGS=$LDFLAGS -Wl,-rpath,' libdir]}];
    mex(args{:});
    mexfile = fullfile(outdir, ['critplex_mex.' mexext()]);
  end
end

function out = pkg_config(args)
  [status, out] = system(['pkg-config ' args]);
  out = strtrim(out);
  if status ~= 0
    error('critplex:build', ['critplex: pkg-config cannot find critplex (%s). Install critplex ' ...
          '(cmake --install build --prefix PREFIX), then call critplex_build_mex(OUTDIR, PREFIX) ' ...
          'or set PKG_CONFIG_PATH to PREFIX/lib/pkgconfig.'], out);
  end
end

function parts = split_flags(text)
  parts = strsplit(strtrim(text));
  parts = parts(~cellfun(@isempty, parts));
end
