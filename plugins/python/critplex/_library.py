"""Finding, loading and checking libcritplex; the ctypes signature of every C call used.

The search order (the first place that has the library wins):
  1. an explicit path: load_library(path), else the CRITPLEX_LIBRARY environment variable;
  2. beside this package: the library directory recorded by `cmake --install` when the
     package was installed from a prefix, or the prefix this package sits in
     (PREFIX/share/critplex/python/critplex);
  3. `pkg-config --variable=libdir critplex` (honours PKG_CONFIG_PATH);
  4. the system loader (ldconfig paths, LD_LIBRARY_PATH).
An explicit path that fails is an error of its own: we never fall back to another copy.
"""
from __future__ import annotations

import ctypes
import ctypes.util
import glob
import os
import shutil
import subprocess
import threading
from typing import List, Optional, Tuple

# The C interface's ABI this package is written for (CPX_ABI_VERSION, the SONAME's number).
ABI_VERSION = 1
_SONAME = "libcritplex.so.%d" % ABI_VERSION

ROW_MAJOR = 0
COL_MAJOR = 1

PROGRESS_FN = ctypes.CFUNCTYPE(ctypes.c_int, ctypes.c_double, ctypes.c_void_p)


class CritplexError(RuntimeError):
    """A call into libcritplex failed.

    Attributes
    ----------
    status : str
        The status name (``"CPX_ERR_IO"``, ``"CPX_ERR_ARGUMENT"``, ...).
    """

    def __init__(self, status: str, message: str):
        super().__init__(message)
        self.status = status


class LibraryNotFound(CritplexError, OSError):
    """libcritplex could not be found or loaded; the message lists every place tried."""

    def __init__(self, message: str):
        CritplexError.__init__(self, "not_found", message)


class AbiMismatch(CritplexError, ImportError):
    """The loaded libcritplex speaks another ABI than this package was written for."""

    def __init__(self, message: str):
        CritplexError.__init__(self, "abi_mismatch", message)


_c = ctypes
_P = _c.c_void_p
_S = _c.c_size_t
_OUT = _c.POINTER(_c.c_void_p)      # handle** and char** outputs (strings kept as void* to free them)
_SIZE_OUT = _c.POINTER(_c.c_size_t)

# name: (argument types, result type). Data buffers are c_void_p (numpy's .ctypes.data).
SIGNATURES = {
    "cpx_version": ([], _c.c_char_p),
    "cpx_abi_version": ([], _c.c_int),
    "cpx_last_error": ([], _c.c_char_p),
    "cpx_status_name": ([_c.c_int], _c.c_char_p),
    "cpx_string_free": ([_P], None),
    "cpx_remove_partial_files": ([], None),
    "cpx_series_create": ([_P, _S, _S, _c.c_int, _P, _OUT], _c.c_int),
    "cpx_series_read": ([_c.c_char_p, _c.c_char_p, _OUT], _c.c_int),
    "cpx_series_free": ([_P], None),
    "cpx_series_shape": ([_P, _SIZE_OUT, _SIZE_OUT], _c.c_int),
    "cpx_series_copy": ([_P, _P, _S, _c.c_int], _c.c_int),
    "cpx_series_region_name": ([_P, _S, _OUT], _c.c_int),
    "cpx_series_read_image": ([_c.c_char_p, _c.c_char_p, _c.c_char_p, _OUT], _c.c_int),
    "cpx_series_clean": ([_P, _c.c_char_p, _OUT], _c.c_int),
    "cpx_series_sampling_interval": ([_P, _c.POINTER(_c.c_double)], _c.c_int),
    "cpx_matrix_create": ([_P, _S, _c.c_int, _P, _OUT], _c.c_int),
    "cpx_matrix_read": ([_c.c_char_p, _c.c_char_p, _OUT], _c.c_int),
    "cpx_matrix_free": ([_P], None),
    "cpx_matrix_size": ([_P, _SIZE_OUT], _c.c_int),
    "cpx_matrix_copy": ([_P, _P, _S, _c.c_int], _c.c_int),
    "cpx_matrix_name": ([_P, _S, _OUT], _c.c_int),
    "cpx_matrix_info": ([_P, _OUT], _c.c_int),
    "cpx_matrix_write": ([_P, _c.c_char_p, _c.c_char_p], _c.c_int),
    "cpx_connect": ([_P, _c.c_char_p, _OUT], _c.c_int),
    "cpx_connect_bands": ([_P, _c.c_char_p, _OUT], _c.c_int),
    "cpx_matrix_set_free": ([_P], None),
    "cpx_matrix_set_count": ([_P, _SIZE_OUT], _c.c_int),
    "cpx_matrix_set_band": ([_P, _S, _OUT], _c.c_int),
    "cpx_matrix_set_get": ([_P, _S, _OUT], _c.c_int),
    "cpx_sweep_run": ([_P, _c.c_char_p, PROGRESS_FN, _P, _OUT], _c.c_int),
    "cpx_sweep_free": ([_P], None),
    "cpx_sweep_json": ([_P, _OUT], _c.c_int),
    "cpx_sweep_curves_tsv": ([_P, _OUT], _c.c_int),
    "cpx_sweep_shape": ([_P, _SIZE_OUT, _SIZE_OUT], _c.c_int),
    "cpx_sweep_column_name": ([_P, _S, _OUT], _c.c_int),
    "cpx_sweep_curve": ([_P, _c.c_char_p, _P, _S], _c.c_int),
    "cpx_sweep_bars": ([_P, _c.c_int, _c.c_int, _P, _S, _SIZE_OUT], _c.c_int),
    "cpx_sweep_node_curvature": ([_P, _c.c_int, _P, _S, _SIZE_OUT, _SIZE_OUT], _c.c_int),
    "cpx_sweep_transitions_tsv": ([_P, _OUT], _c.c_int),
    "cpx_subject_run": ([_c.c_char_p, _c.c_char_p, PROGRESS_FN, _P, _OUT], _c.c_int),
    "cpx_cohort_run": ([_c.c_char_p, _c.c_char_p, _c.c_char_p, _c.c_char_p, PROGRESS_FN, _P, _OUT], _c.c_int),
    "cpx_cohort_compare": ([_c.c_char_p, _c.c_char_p, _OUT], _c.c_int),
    "cpx_stats_design_test": ([_c.c_char_p, _c.c_char_p, _OUT], _c.c_int),
    "cpx_cohort_report": ([_c.c_char_p, _c.c_char_p, _OUT], _c.c_int),
    "cpx_simulate_study": ([_c.c_char_p, _c.c_char_p, _OUT], _c.c_int),
    "cpx_dataset_run": ([_c.c_char_p, _c.c_char_p, _c.c_char_p, _c.c_char_p, PROGRESS_FN, _P, _OUT], _c.c_int),
}

_lock = threading.Lock()
_lib: Optional[ctypes.CDLL] = None
_lib_path: Optional[str] = None


def _candidates_beside_package() -> List[Tuple[str, str]]:
    """(place, path) pairs for the library installed next to this package."""
    out = []
    try:
        from . import _installed_at  # written by `cmake --install` (see cmake/hosts.cmake)
        out.append(("recorded by cmake --install", os.path.join(_installed_at.LIBDIR, _SONAME)))
    except ImportError:
        pass
    here = os.path.dirname(os.path.abspath(__file__))
    prefix = os.path.normpath(os.path.join(here, "..", "..", "..", ".."))  # PREFIX/share/critplex/python/critplex
    found = sorted(glob.glob(os.path.join(prefix, "lib*", _SONAME)) + glob.glob(os.path.join(prefix, "lib*", "*", _SONAME)))
    out.append(("the prefix this package sits in",
                found[0] if found else os.path.join(prefix, "lib", _SONAME)))
    return out


def _candidate_from_pkg_config() -> Tuple[str, Optional[str], str]:
    if shutil.which("pkg-config") is None:
        return ("pkg-config critplex", None, "pkg-config is not installed")
    try:
        p = subprocess.run(["pkg-config", "--variable=libdir", "critplex"], capture_output=True, text=True, timeout=20)
    except (OSError, subprocess.SubprocessError) as e:
        return ("pkg-config critplex", None, str(e))
    if p.returncode != 0 or not p.stdout.strip():
        return ("pkg-config critplex", None, "no critplex.pc on PKG_CONFIG_PATH=%r" % os.environ.get("PKG_CONFIG_PATH", ""))
    return ("pkg-config critplex", os.path.join(p.stdout.strip(), _SONAME), "")


def _declare(lib: ctypes.CDLL) -> None:
    for name, (args, result) in SIGNATURES.items():
        f = getattr(lib, name)
        f.argtypes = args
        f.restype = result


def _check_abi(lib: ctypes.CDLL, path: str) -> None:
    lib.cpx_abi_version.restype = ctypes.c_int
    lib.cpx_abi_version.argtypes = []
    found = lib.cpx_abi_version()
    if found != ABI_VERSION:
        lib.cpx_version.restype = ctypes.c_char_p
        raise AbiMismatch(
            "critplex: the Python package is written for ABI %d of libcritplex, but %s reports ABI %d "
            "(library version %s). Install the Python package from the same prefix as the library "
            "(PREFIX/share/critplex/python), or point CRITPLEX_LIBRARY at a %s."
            % (ABI_VERSION, path, found, lib.cpx_version().decode(), _SONAME))


def _open(path: str) -> ctypes.CDLL:
    lib = ctypes.CDLL(path)
    _check_abi(lib, path)
    _declare(lib)
    return lib


def load_library(path: Optional[str] = None) -> ctypes.CDLL:
    """Load libcritplex (once per process) and check its ABI.

    Parameters
    ----------
    path : str, optional
        Path of ``libcritplex.so.1`` to use. When omitted, ``CRITPLEX_LIBRARY`` is used if
        set, else the library installed beside this package, else ``pkg-config critplex``,
        else the system loader.

    Returns
    -------
    ctypes.CDLL
        The library with argument and result types declared for every ``cpx_`` call.

    Raises
    ------
    LibraryNotFound
        No place had a loadable library; the message lists the places tried and how to fix it.
    AbiMismatch
        The library found speaks another ABI than this package.
    """
    global _lib, _lib_path
    with _lock:
        if _lib is not None:
            if path is not None and os.path.realpath(path) != os.path.realpath(_lib_path or ""):
                raise CritplexError("misuse", "critplex: %s is already loaded; start a new process to use %s"
                                    % (_lib_path, path))
            return _lib
        explicit = path or os.environ.get("CRITPLEX_LIBRARY")
        if explicit:
            where = "load_library(path)" if path else "CRITPLEX_LIBRARY"
            try:
                _lib = _open(explicit)
            except OSError as e:
                raise LibraryNotFound("critplex: cannot load %s given by %s: %s" % (explicit, where, e)) from None
            _lib_path = explicit
            return _lib
        tried = []
        places = [(place, p, "") for place, p in _candidates_beside_package()]
        places.append(_candidate_from_pkg_config())
        places.append(("the system loader", ctypes.util.find_library("critplex") or _SONAME, ""))
        for place, candidate, reason in places:
            if candidate is None:
                tried.append("  - %s: %s" % (place, reason))
                continue
            if os.path.isabs(candidate) and not os.path.exists(candidate):
                tried.append("  - %s: %s does not exist" % (place, candidate))
                continue
            try:
                _lib = _open(candidate)
            except OSError as e:
                tried.append("  - %s: %s" % (place, e))
                continue
            _lib_path = candidate
            return _lib
        raise LibraryNotFound(
            "critplex: libcritplex (%s) was not found. Places tried, in order:\n  - CRITPLEX_LIBRARY: not set\n%s\n"
            "To fix: set CRITPLEX_LIBRARY=/path/to/%s, call critplex.load_library(path), set PKG_CONFIG_PATH to "
            "PREFIX/lib/pkgconfig of your critplex install, or install critplex into a system prefix "
            "(cmake --install build --prefix /usr/local && ldconfig)." % (_SONAME, "\n".join(tried), _SONAME))


def library() -> ctypes.CDLL:
    """The loaded libcritplex, loading it on first use (see :func:`load_library`).

    Returns
    -------
    ctypes.CDLL
        With the argument and result types of every ``cpx_`` call declared.
    """
    return _lib if _lib is not None else load_library()


def library_path() -> str:
    """Where the libcritplex in use was loaded from, loading it on first use.

    Returns
    -------
    str
        A path, or the name the system loader resolved (``libcritplex.so.1``).
    """
    library()
    return _lib_path or ""


def check(status: int) -> None:
    """Raise CritplexError with the library's message unless status is CPX_OK."""
    if status != 0:
        lib = library()
        raise CritplexError(lib.cpx_status_name(status).decode(), lib.cpx_last_error().decode())


def take_string(ptr: ctypes.c_void_p) -> str:
    """Copy a string the library allocated, then release it with cpx_string_free."""
    try:
        return ctypes.string_at(ptr).decode("utf-8")
    finally:
        library().cpx_string_free(ptr)


def progress_callback(progress):
    """A C progress callback around progress(fraction) -> bool (True cancels); NULL for None."""
    if progress is None:
        return PROGRESS_FN(0)
    return PROGRESS_FN(lambda fraction, _user: 1 if progress(fraction) else 0)
