"""critplex from Python (ctypes binding in plugins/python): one invented subject.
Run:  CRITPLEX_LIBRARY=build/capi/libcritplex.so PYTHONPATH=plugins/python python3 examples/hosts/python_example.py
"""
import tempfile

import numpy as np

import critplex

with tempfile.TemporaryDirectory() as tmp:
    study = critplex.simulate_study(tmp + "/study", regions=40, frames=300,
                                    groups=[{"name": "rested", "subjects": 2}, {"name": "deprived", "subjects": 2}])
    series = critplex.read_series(tmp + "/study/timeseries/sub-rested01_timeseries.tsv")
    matrix = critplex.connect(series, method="ledoit_wolf", sampling_interval=0.8)
    print("Ledoit-Wolf shrinkage intensity:", matrix.info["shrinkage_intensity"])
    result = critplex.sweep(matrix, max_density=0.4, grid=0.02, homology={"max_dimension": 2}, curvature={})
    density, chi = result.curve("density"), result.curve("chi")
    print("first chi zero near density", result.json()["transitions"]["first_chi_zero"])
    print(np.column_stack([density, chi])[:8])
