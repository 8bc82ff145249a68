# Host packages: `cmake --install` copies each under PREFIX/share/critplex/<host>, from
# where each host's own tool installs it (pip, R CMD INSTALL, critplex_build_mex, Julia's
# Pkg). The Python package also gets the library's folder recorded in it (written at
# install time, so `--prefix` and DESTDIR are honoured), to find libcritplex with no
# environment variable.
set(CRITPLEX_HOSTS_DESTINATION ${CMAKE_INSTALL_DATADIR}/critplex)
set(critplex_host_excludes PATTERN "__pycache__" EXCLUDE PATTERN "*.egg-info" EXCLUDE PATTERN ".gitignore" EXCLUDE
    PATTERN "*.o" EXCLUDE PATTERN "*.so" EXCLUDE PATTERN "*.mex*" EXCLUDE PATTERN "_installed_at.py" EXCLUDE)

install(DIRECTORY plugins/python/ DESTINATION ${CRITPLEX_HOSTS_DESTINATION}/python ${critplex_host_excludes}
        PATTERN "build" EXCLUDE)
install(DIRECTORY plugins/r/critplex DESTINATION ${CRITPLEX_HOSTS_DESTINATION}/r USE_SOURCE_PERMISSIONS
        ${critplex_host_excludes} PATTERN "Makevars" EXCLUDE PATTERN ".Rbuildignore" EXCLUDE)
install(DIRECTORY plugins/matlab/ DESTINATION ${CRITPLEX_HOSTS_DESTINATION}/matlab ${critplex_host_excludes})
install(DIRECTORY plugins/julia/ DESTINATION ${CRITPLEX_HOSTS_DESTINATION}/julia ${critplex_host_excludes})
install(DIRECTORY examples/hosts/ DESTINATION ${CRITPLEX_HOSTS_DESTINATION}/examples)

set(critplex_record_libdir [[
  set(libdir "@CMAKE_INSTALL_LIBDIR@")
  if(NOT IS_ABSOLUTE "${libdir}")
    set(libdir "${CMAKE_INSTALL_PREFIX}/${libdir}")
  endif()
  file(WRITE "$ENV{DESTDIR}${CMAKE_INSTALL_PREFIX}/@CRITPLEX_HOSTS_DESTINATION@/python/critplex/_installed_at.py"
       "# Written by cmake --install: the folder libcritplex was installed into with this package.\nLIBDIR = \"${libdir}\"\n")
]])
string(CONFIGURE "${critplex_record_libdir}" critplex_record_libdir @ONLY)
install(CODE "${critplex_record_libdir}")
