"""Loads the installed libcritplex with ctypes and computes a correlation matrix."""
import numpy as np

import critplex

x = np.random.default_rng(7).standard_normal((40, 6))
m = critplex.connect(x)
assert np.max(np.abs(m.values - np.corrcoef(x, rowvar=False))) < 1e-12
assert critplex.abi_version() >= 1
print("consumer ok: ctypes through the installed library", critplex.version())
