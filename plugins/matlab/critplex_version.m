function [version, abi] = critplex_version()
% CRITPLEX_VERSION  Version and ABI of the loaded libcritplex.
%   [version, abi] = critplex_version() checks that the library speaks the ABI the MEX
%   gateway was built against and stops with a message saying how to rebuild otherwise.
  [abi, built_for] = critplex_mex('abi');
  if abi ~= built_for
    error('critplex:abi', ['critplex: the MEX gateway was built for ABI %d of libcritplex but the ' ...
          'library loaded reports ABI %d: rebuild it with critplex_build_mex.'], built_for, abi);
  end
  version = critplex_mex('version');
end
