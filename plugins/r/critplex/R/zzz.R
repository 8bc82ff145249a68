# The ABI check at load: the library found at run time must speak the ABI this package
# was compiled against (the SONAME guards the system loader; this guards everything else).
.onLoad <- function(libname, pkgname) {
  abi <- .Call(cpxr_abi)
  if (abi[1L] != abi[2L]) {
    stop(sprintf(paste0("critplex: the R package was built for ABI %d of libcritplex, but the library ",
                        "loaded (version %s) reports ABI %d. Reinstall the package against that ",
                        "library (PKG_CONFIG_PATH=PREFIX/lib/pkgconfig R CMD INSTALL ...)."),
                 abi[2L], .Call(cpxr_version), abi[1L]), call. = FALSE)
  }
}
