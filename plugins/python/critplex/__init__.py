"""Python binding of critplex through ctypes: the same C interface MATLAB, R and Julia use.

The shared library is found from the CRITPLEX_LIBRARY environment variable, else by
the system loader ("libcritplex.so.1"). Arrays are numpy arrays (float64).

Research software, not a medical device: not for clinical decisions.
"""
from __future__ import annotations

import ctypes
import json
import os
from typing import Any, Callable, Dict, Optional, Sequence

import numpy as np

__all__ = [
    "CritplexError", "library", "version", "abi_version", "Series", "Matrix", "Sweep",
    "read_series", "read_matrix", "connect", "sweep", "run_subject", "run_cohort",
    "compare", "report", "simulate_study",
]

ROW_MAJOR = 0
COL_MAJOR = 1

_PROGRESS = ctypes.CFUNCTYPE(ctypes.c_int, ctypes.c_double, ctypes.c_void_p)


class CritplexError(RuntimeError):
    """A failed call: .status is the cpx_status name, str() the library's message."""

    def __init__(self, status: str, message: str):
        super().__init__(message)
        self.status = status


_lib: Optional[ctypes.CDLL] = None


def library() -> ctypes.CDLL:
    """The loaded libcritplex with argument and result types declared."""
    global _lib
    if _lib is not None:
        return _lib
    path = os.environ.get("CRITPLEX_LIBRARY") or "libcritplex.so.1"
    lib = ctypes.CDLL(path)
    c = ctypes
    P = c.c_void_p
    sig = {
        "cpx_version": ([], c.c_char_p),
        "cpx_abi_version": ([], c.c_int),
        "cpx_last_error": ([], c.c_char_p),
        "cpx_status_name": ([c.c_int], c.c_char_p),
        "cpx_string_free": ([P], None),
        "cpx_series_create": ([P, c.c_size_t, c.c_size_t, c.c_int, P, c.POINTER(P)], c.c_int),
        "cpx_series_read": ([c.c_char_p, c.c_char_p, c.POINTER(P)], c.c_int),
        "cpx_series_free": ([P], None),
        "cpx_series_shape": ([P, c.POINTER(c.c_size_t), c.POINTER(c.c_size_t)], c.c_int),
        "cpx_series_copy": ([P, P, c.c_size_t, c.c_int], c.c_int),
        "cpx_series_region_name": ([P, c.c_size_t, c.POINTER(P)], c.c_int),
        "cpx_matrix_create": ([P, c.c_size_t, c.c_int, P, c.POINTER(P)], c.c_int),
        "cpx_matrix_read": ([c.c_char_p, c.c_char_p, c.POINTER(P)], c.c_int),
        "cpx_matrix_free": ([P], None),
        "cpx_matrix_size": ([P, c.POINTER(c.c_size_t)], c.c_int),
        "cpx_matrix_copy": ([P, P, c.c_size_t, c.c_int], c.c_int),
        "cpx_matrix_name": ([P, c.c_size_t, c.POINTER(P)], c.c_int),
        "cpx_matrix_info": ([P, c.POINTER(P)], c.c_int),
        "cpx_matrix_write": ([P, c.c_char_p, c.c_char_p], c.c_int),
        "cpx_connect": ([P, c.c_char_p, c.POINTER(P)], c.c_int),
        "cpx_sweep_run": ([P, c.c_char_p, _PROGRESS, P, c.POINTER(P)], c.c_int),
        "cpx_sweep_free": ([P], None),
        "cpx_sweep_json": ([P, c.POINTER(P)], c.c_int),
        "cpx_sweep_curves_tsv": ([P, c.POINTER(P)], c.c_int),
        "cpx_sweep_shape": ([P, c.POINTER(c.c_size_t), c.POINTER(c.c_size_t)], c.c_int),
        "cpx_sweep_column_name": ([P, c.c_size_t, c.POINTER(P)], c.c_int),
        "cpx_sweep_curve": ([P, c.c_char_p, P, c.c_size_t], c.c_int),
        "cpx_subject_run": ([c.c_char_p, c.c_char_p, _PROGRESS, P, c.POINTER(P)], c.c_int),
        "cpx_cohort_run": ([c.c_char_p, c.c_char_p, c.c_char_p, c.c_char_p, _PROGRESS, P, c.POINTER(P)], c.c_int),
        "cpx_cohort_compare": ([c.c_char_p, c.c_char_p, c.POINTER(P)], c.c_int),
        "cpx_cohort_report": ([c.c_char_p, c.c_char_p, c.POINTER(P)], c.c_int),
        "cpx_simulate_study": ([c.c_char_p, c.c_char_p, c.POINTER(P)], c.c_int),
    }
    for name, (args, res) in sig.items():
        f = getattr(lib, name)
        f.argtypes = args
        f.restype = res
    _lib = lib
    return lib


def _check(status: int) -> None:
    if status != 0:
        lib = library()
        raise CritplexError(lib.cpx_status_name(status).decode(), lib.cpx_last_error().decode())


def _take_string(ptr: ctypes.c_void_p) -> str:
    """Copies a library-allocated string and releases it."""
    try:
        return ctypes.string_at(ptr).decode("utf-8")
    finally:
        library().cpx_string_free(ptr)


def _options(options: Optional[Dict[str, Any]]) -> Optional[bytes]:
    return None if options is None else json.dumps(options).encode()


def version() -> str:
    return library().cpx_version().decode()


def abi_version() -> int:
    return library().cpx_abi_version()


class _Handle:
    _free = ""

    def __init__(self, handle: ctypes.c_void_p):
        self._h = handle

    def __del__(self):
        h = getattr(self, "_h", None)
        if h:
            getattr(library(), self._free)(h)
            self._h = None


class Series(_Handle):
    """Regional time series, frames (rows) x regions (columns)."""
    _free = "cpx_series_free"

    @classmethod
    def from_array(cls, data, names: Optional[Sequence[str]] = None) -> "Series":
        a = np.ascontiguousarray(np.asarray(data, dtype=np.float64))
        if a.ndim != 2:
            raise ValueError("time series must be 2-D (frames x regions)")
        c_names = None
        if names is not None:
            if len(names) != a.shape[1]:
                raise ValueError("one name per region (column) is needed")
            c_names = (ctypes.c_char_p * len(names))(*[n.encode() for n in names])
        h = ctypes.c_void_p()
        _check(library().cpx_series_create(a.ctypes.data, a.shape[0], a.shape[1], ROW_MAJOR,
                                           ctypes.cast(c_names, ctypes.c_void_p) if c_names is not None else None,
                                           ctypes.byref(h)))
        return cls(h)

    @property
    def shape(self):
        t, n = ctypes.c_size_t(), ctypes.c_size_t()
        _check(library().cpx_series_shape(self._h, ctypes.byref(t), ctypes.byref(n)))
        return t.value, n.value

    @property
    def values(self) -> np.ndarray:
        t, n = self.shape
        out = np.empty((t, n), dtype=np.float64)
        _check(library().cpx_series_copy(self._h, out.ctypes.data, out.size, ROW_MAJOR))
        return out

    @property
    def names(self):
        out = []
        for i in range(self.shape[1]):
            p = ctypes.c_void_p()
            _check(library().cpx_series_region_name(self._h, i, ctypes.byref(p)))
            out.append(_take_string(p))
        return out


class Matrix(_Handle):
    """A symmetric N x N connectivity matrix with names and estimator information."""
    _free = "cpx_matrix_free"

    @classmethod
    def from_array(cls, data, names: Optional[Sequence[str]] = None) -> "Matrix":
        a = np.ascontiguousarray(np.asarray(data, dtype=np.float64))
        if a.ndim != 2 or a.shape[0] != a.shape[1]:
            raise ValueError("matrix must be square")
        c_names = None
        if names is not None:
            c_names = (ctypes.c_char_p * len(names))(*[n.encode() for n in names])
        h = ctypes.c_void_p()
        _check(library().cpx_matrix_create(a.ctypes.data, a.shape[0], ROW_MAJOR,
                                           ctypes.cast(c_names, ctypes.c_void_p) if c_names is not None else None,
                                           ctypes.byref(h)))
        return cls(h)

    @property
    def size(self) -> int:
        n = ctypes.c_size_t()
        _check(library().cpx_matrix_size(self._h, ctypes.byref(n)))
        return n.value

    @property
    def values(self) -> np.ndarray:
        n = self.size
        out = np.empty((n, n), dtype=np.float64)
        _check(library().cpx_matrix_copy(self._h, out.ctypes.data, out.size, ROW_MAJOR))
        return out

    @property
    def names(self):
        out = []
        for i in range(self.size):
            p = ctypes.c_void_p()
            _check(library().cpx_matrix_name(self._h, i, ctypes.byref(p)))
            out.append(_take_string(p))
        return out

    @property
    def info(self) -> Dict[str, Any]:
        p = ctypes.c_void_p()
        _check(library().cpx_matrix_info(self._h, ctypes.byref(p)))
        return json.loads(_take_string(p))

    def write(self, path: str, **options) -> None:
        _check(library().cpx_matrix_write(self._h, str(path).encode(), _options(options or None)))


class Sweep(_Handle):
    """Result of a density sweep: curves on the grid and every engine's section."""
    _free = "cpx_sweep_free"

    def json(self) -> Dict[str, Any]:
        p = ctypes.c_void_p()
        _check(library().cpx_sweep_json(self._h, ctypes.byref(p)))
        return json.loads(_take_string(p))

    def curves_tsv(self) -> str:
        p = ctypes.c_void_p()
        _check(library().cpx_sweep_curves_tsv(self._h, ctypes.byref(p)))
        return _take_string(p)

    @property
    def columns(self):
        pts, cols = ctypes.c_size_t(), ctypes.c_size_t()
        _check(library().cpx_sweep_shape(self._h, ctypes.byref(pts), ctypes.byref(cols)))
        out = []
        for i in range(cols.value):
            p = ctypes.c_void_p()
            _check(library().cpx_sweep_column_name(self._h, i, ctypes.byref(p)))
            out.append(_take_string(p))
        return out

    def curve(self, column: str) -> np.ndarray:
        pts = ctypes.c_size_t()
        _check(library().cpx_sweep_shape(self._h, ctypes.byref(pts), None))
        out = np.empty(pts.value, dtype=np.float64)
        _check(library().cpx_sweep_curve(self._h, column.encode(), out.ctypes.data, out.size))
        return out


def read_series(path: str, **options) -> Series:
    h = ctypes.c_void_p()
    _check(library().cpx_series_read(str(path).encode(), _options(options or None), ctypes.byref(h)))
    return Series(h)


def read_matrix(path: str, **options) -> Matrix:
    h = ctypes.c_void_p()
    _check(library().cpx_matrix_read(str(path).encode(), _options(options or None), ctypes.byref(h)))
    return Matrix(h)


def connect(series, **options) -> Matrix:
    """Connectivity of a Series (or a frames x regions array); options as in the README."""
    if not isinstance(series, Series):
        series = Series.from_array(series)
    h = ctypes.c_void_p()
    _check(library().cpx_connect(series._h, _options(options or None), ctypes.byref(h)))
    return Matrix(h)


def sweep(matrix, progress: Optional[Callable[[float], bool]] = None, **options) -> Sweep:
    """Density sweep of a Matrix (or a square array); progress(fraction) returning True cancels."""
    if not isinstance(matrix, Matrix):
        matrix = Matrix.from_array(matrix)
    cb = _PROGRESS(0) if progress is None else _PROGRESS(lambda f, _u: 1 if progress(f) else 0)
    h = ctypes.c_void_p()
    _check(library().cpx_sweep_run(matrix._h, _options(options or None), cb, None, ctypes.byref(h)))
    return Sweep(h)


def _callback(progress: Optional[Callable[[float], bool]]):
    return _PROGRESS(0) if progress is None else _PROGRESS(lambda f, _u: 1 if progress(f) else 0)


def run_subject(config: Dict[str, Any], out_dir: Optional[str] = None,
                progress: Optional[Callable[[float], bool]] = None) -> Dict[str, Any]:
    """One subject end to end (README: subject config); returns the subject document."""
    p = ctypes.c_void_p()
    _check(library().cpx_subject_run(json.dumps(config).encode(), None if out_dir is None else str(out_dir).encode(),
                                     _callback(progress), None, ctypes.byref(p)))
    return json.loads(_take_string(p))


def run_cohort(manifest: str, config: Dict[str, Any], out_dir: str, workers: int = 0, force: bool = False,
               progress: Optional[Callable[[float], bool]] = None) -> Dict[str, Any]:
    """Every subject of a manifest TSV; returns the run summary (done, skipped, failed)."""
    p = ctypes.c_void_p()
    opts = json.dumps({"workers": workers, "force": force}).encode()
    _check(library().cpx_cohort_run(str(manifest).encode(), json.dumps(config).encode(), str(out_dir).encode(), opts,
                                    _callback(progress), None, ctypes.byref(p)))
    return json.loads(_take_string(p))


def compare(results_dir: str, **options) -> Dict[str, Any]:
    """Group comparison of a cohort run's folder (README: compare options)."""
    p = ctypes.c_void_p()
    _check(library().cpx_cohort_compare(str(results_dir).encode(), _options(options or None), ctypes.byref(p)))
    return json.loads(_take_string(p))


def report(results_dir: str, **options) -> str:
    """Writes the HTML report of a compared cohort; returns its path."""
    p = ctypes.c_void_p()
    _check(library().cpx_cohort_report(str(results_dir).encode(), _options(options or None), ctypes.byref(p)))
    return _take_string(p)


def simulate_study(out_dir: str, **options) -> Dict[str, Any]:
    """Writes an invented two-group study (time series, manifest, config) into out_dir."""
    p = ctypes.c_void_p()
    _check(library().cpx_simulate_study(_options(options or None), str(out_dir).encode(), ctypes.byref(p)))
    return json.loads(_take_string(p))
