#!/usr/bin/python3
"""Timing of the cohort statistics and surrogates against the Python reference stack.

Runs ours (through the C interface, ctypes) and the reference on the same inputs in the
same run and prints seconds and ratios. Not run by ctest. Usage:
  CRITPLEX_LIBRARY=build/capi/libcritplex.so /usr/bin/python3 tests/bench/cohort_stats.py
References: scipy.stats.permutation_test and bootstrap (scipy 1.10), a numpy
multivariate phase-randomisation written here from its definition (Prichard & Theiler
1994). Invented random data.
"""
import ctypes
import json
import os
import time

import numpy as np
from scipy import stats

lib = ctypes.CDLL(os.environ["CRITPLEX_LIBRARY"])
dp = ctypes.POINTER(ctypes.c_double)
lib.cpx_string_free.argtypes = [ctypes.c_void_p]
lib.cpx_stats_permutation_test.argtypes = [dp, ctypes.c_size_t, dp, ctypes.c_size_t, ctypes.c_char_p,
                                           ctypes.POINTER(ctypes.c_void_p)]
lib.cpx_stats_bootstrap_band.argtypes = [dp, ctypes.c_size_t, ctypes.c_size_t, ctypes.c_int, ctypes.c_char_p,
                                         ctypes.POINTER(ctypes.c_void_p)]
lib.cpx_series_create.argtypes = [dp, ctypes.c_size_t, ctypes.c_size_t, ctypes.c_int, ctypes.c_void_p,
                                  ctypes.POINTER(ctypes.c_void_p)]
lib.cpx_series_free.argtypes = [ctypes.c_void_p]
lib.cpx_surrogate.argtypes = [ctypes.c_void_p, ctypes.c_char_p, ctypes.POINTER(ctypes.c_void_p)]


def best_of(fn, repeats=3):
    times = []
    for _ in range(repeats):
        start = time.perf_counter()
        fn()
        times.append(time.perf_counter() - start)
    return min(times)


def row(name, ours, ref):
    print(f"{name:48s} ours {ours:8.4f} s   reference {ref:8.4f} s   ratio {ref / ours:7.1f}x")


rng = np.random.default_rng(1)
a, b = rng.normal(0.3, 1, 20), rng.normal(0, 1, 20)


def ours_perm(statistic):
    out = ctypes.c_void_p()
    lib.cpx_stats_permutation_test(a.ctypes.data_as(dp), 20, b.ctypes.data_as(dp), 20,
                                   json.dumps({"statistic": statistic, "resamples": 9999}).encode(), ctypes.byref(out))
    lib.cpx_string_free(out)


def diff(x, y, axis=-1):
    return np.mean(x, axis=axis) - np.mean(y, axis=axis)


def welch(x, y, axis=-1):
    return stats.ttest_ind(x, y, equal_var=False, axis=axis).statistic


row("permutation test, 20 vs 20, 9999, mean diff", best_of(lambda: ours_perm("mean_difference")),
    best_of(lambda: stats.permutation_test((a, b), diff, vectorized=True, n_resamples=9999)))
row("permutation test, 20 vs 20, 9999, Welch t", best_of(lambda: ours_perm("welch_t")),
    best_of(lambda: stats.permutation_test((a, b), welch, vectorized=True, n_resamples=9999)))

curves = rng.normal(size=(20, 100))


def ours_band():
    out = ctypes.c_void_p()
    lib.cpx_stats_bootstrap_band(curves.ctypes.data_as(dp), 20, 100, 0, b'{"resamples": 9999}', ctypes.byref(out))
    lib.cpx_string_free(out)


row("bootstrap band, 20 subjects x 100 points, 9999", best_of(ours_band),
    best_of(lambda: stats.bootstrap((curves,), np.mean, axis=0, method="percentile", n_resamples=9999), 1))

series = np.ascontiguousarray(rng.normal(size=(600, 90)).cumsum(axis=0))


def ours_surrogate(method):
    handle, out = ctypes.c_void_p(), ctypes.c_void_p()
    lib.cpx_series_create(series.ctypes.data_as(dp), 600, 90, 0, None, ctypes.byref(handle))
    lib.cpx_surrogate(handle, json.dumps({"method": method}).encode(), ctypes.byref(out))
    lib.cpx_series_free(out)
    lib.cpx_series_free(handle)


def numpy_multivariate():
    spectrum = np.fft.rfft(series, axis=0)
    phases = np.exp(2j * np.pi * rng.uniform(size=(spectrum.shape[0], 1)))
    phases[0] = 1
    phases[-1] = 1
    return np.fft.irfft(spectrum * phases, n=600, axis=0)


def numpy_iaaft(iterations=100):
    x = series
    amplitude = np.abs(np.fft.rfft(x, axis=0))
    ordered = np.sort(x, axis=0)
    s = rng.permuted(x, axis=0)
    for _ in range(iterations):
        spectrum = np.fft.rfft(s, axis=0)
        s = np.fft.irfft(amplitude * np.exp(1j * np.angle(spectrum)), n=600, axis=0)
        ranks = np.argsort(np.argsort(s, axis=0), axis=0)
        s = np.take_along_axis(ordered, ranks, axis=0)
    return s


row("multivariate phase surrogate, 600 x 90", best_of(lambda: ours_surrogate("phase_multivariate")),
    best_of(numpy_multivariate))
row("IAAFT surrogate, 600 x 90, <= 100 iterations", best_of(lambda: ours_surrogate("iaaft")), best_of(numpy_iaaft))
