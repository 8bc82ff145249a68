"""ctypes access to the signals and connectivity calls of libcritplex, for the
test_signals_*.py reference checks (the lead's Python binding may replace it)."""
import ctypes
import json
import os

import numpy as np

LIB = ctypes.CDLL(os.environ["CRITPLEX_LIBRARY"])
P = ctypes.c_void_p
LIB.cpx_last_error.restype = ctypes.c_char_p
LIB.cpx_series_create.argtypes = [P, ctypes.c_size_t, ctypes.c_size_t, ctypes.c_int, P, ctypes.POINTER(P)]
LIB.cpx_series_read.argtypes = [ctypes.c_char_p, ctypes.c_char_p, ctypes.POINTER(P)]
LIB.cpx_series_read_image.argtypes = [ctypes.c_char_p, ctypes.c_char_p, ctypes.c_char_p, ctypes.POINTER(P)]
LIB.cpx_series_clean.argtypes = [P, ctypes.c_char_p, ctypes.POINTER(P)]
LIB.cpx_series_free.argtypes = [P]
LIB.cpx_series_shape.argtypes = [P, ctypes.POINTER(ctypes.c_size_t), ctypes.POINTER(ctypes.c_size_t)]
LIB.cpx_series_copy.argtypes = [P, P, ctypes.c_size_t, ctypes.c_int]
LIB.cpx_series_region_name.argtypes = [P, ctypes.c_size_t, ctypes.POINTER(ctypes.c_void_p)]
LIB.cpx_series_sampling_interval.argtypes = [P, ctypes.POINTER(ctypes.c_double)]
LIB.cpx_connect.argtypes = [P, ctypes.c_char_p, ctypes.POINTER(P)]
LIB.cpx_connect_bands.argtypes = [P, ctypes.c_char_p, ctypes.POINTER(P)]
LIB.cpx_matrix_set_count.argtypes = [P, ctypes.POINTER(ctypes.c_size_t)]
LIB.cpx_matrix_set_band.argtypes = [P, ctypes.c_size_t, ctypes.POINTER(ctypes.c_void_p)]
LIB.cpx_matrix_set_get.argtypes = [P, ctypes.c_size_t, ctypes.POINTER(P)]
LIB.cpx_matrix_set_free.argtypes = [P]
LIB.cpx_matrix_free.argtypes = [P]
LIB.cpx_matrix_size.argtypes = [P, ctypes.POINTER(ctypes.c_size_t)]
LIB.cpx_matrix_copy.argtypes = [P, P, ctypes.c_size_t, ctypes.c_int]
LIB.cpx_matrix_info.argtypes = [P, ctypes.POINTER(ctypes.c_void_p)]
LIB.cpx_string_free.argtypes = [ctypes.c_void_p]


class CritplexError(Exception):
    def __init__(self, status, message):
        super().__init__(message)
        self.status = status


def check(status):
    if status != 0:
        raise CritplexError(status, LIB.cpx_last_error().decode())


def take_string(pointer):
    text = ctypes.cast(pointer, ctypes.c_char_p).value.decode()
    LIB.cpx_string_free(pointer)
    return text


class Series:
    def __init__(self, handle):
        self.handle = handle

    @staticmethod
    def from_array(values):
        values = np.ascontiguousarray(values, dtype=np.float64)
        h = P()
        check(LIB.cpx_series_create(values.ctypes.data, values.shape[0], values.shape[1], 0, None, ctypes.byref(h)))
        return Series(h)

    @staticmethod
    def read(path, options=None):
        h = P()
        check(LIB.cpx_series_read(path.encode(), json.dumps(options or {}).encode(), ctypes.byref(h)))
        return Series(h)

    @staticmethod
    def read_image(image, labels, options=None):
        h = P()
        check(LIB.cpx_series_read_image(image.encode(), labels.encode(), json.dumps(options or {}).encode(),
                                        ctypes.byref(h)))
        return Series(h)

    def __del__(self):
        LIB.cpx_series_free(self.handle)

    def values(self):
        t, n = ctypes.c_size_t(), ctypes.c_size_t()
        check(LIB.cpx_series_shape(self.handle, ctypes.byref(t), ctypes.byref(n)))
        out = np.empty((t.value, n.value))
        check(LIB.cpx_series_copy(self.handle, out.ctypes.data, out.size, 0))
        return out

    def names(self):
        n = self.values().shape[1]
        out = []
        for i in range(n):
            p = ctypes.c_void_p()
            check(LIB.cpx_series_region_name(self.handle, i, ctypes.byref(p)))
            out.append(take_string(p))
        return out

    def sampling_interval(self):
        d = ctypes.c_double()
        check(LIB.cpx_series_sampling_interval(self.handle, ctypes.byref(d)))
        return d.value

    def clean(self, options):
        h = P()
        check(LIB.cpx_series_clean(self.handle, json.dumps(options).encode(), ctypes.byref(h)))
        return Series(h)


def matrix_values(handle):
    n = ctypes.c_size_t()
    check(LIB.cpx_matrix_size(handle, ctypes.byref(n)))
    out = np.empty((n.value, n.value))
    check(LIB.cpx_matrix_copy(handle, out.ctypes.data, out.size, 0))
    p = ctypes.c_void_p()
    check(LIB.cpx_matrix_info(handle, ctypes.byref(p)))
    return out, json.loads(take_string(p))


def connect(series, options):
    """(matrix, info) from cpx_connect."""
    h = P()
    check(LIB.cpx_connect(series.handle, json.dumps(options).encode(), ctypes.byref(h)))
    try:
        return matrix_values(h)
    finally:
        LIB.cpx_matrix_free(h)


def connect_bands(series, options):
    """[(band, matrix, info)] from cpx_connect_bands."""
    s = P()
    check(LIB.cpx_connect_bands(series.handle, json.dumps(options).encode(), ctypes.byref(s)))
    try:
        count = ctypes.c_size_t()
        check(LIB.cpx_matrix_set_count(s, ctypes.byref(count)))
        out = []
        for k in range(count.value):
            p = ctypes.c_void_p()
            check(LIB.cpx_matrix_set_band(s, k, ctypes.byref(p)))
            name = take_string(p)
            h = P()
            check(LIB.cpx_matrix_set_get(s, k, ctypes.byref(h)))
            try:
                m, info = matrix_values(h)
            finally:
                LIB.cpx_matrix_free(h)
            out.append((name, m, info))
        return out
    finally:
        LIB.cpx_matrix_set_free(s)


def nitime_fmri():
    """nitime's real resting-state fMRI region series (Debian python3-nitime):
    data/fmri_timeseries.csv, 250 frames; first three columns are nuisance signals."""
    import nitime
    path = os.path.join(os.path.dirname(nitime.__file__), "data", "fmri_timeseries.csv")
    with open(path) as f:
        header = f.readline().strip().split(",")
    data = np.loadtxt(path, delimiter=",", skiprows=1)
    return header, data, path
