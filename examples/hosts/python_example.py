"""critplex from Python: an invented study, one subject by hand, then the whole cohort.
Install:  pip install --no-build-isolation PREFIX/share/critplex/python   (after cmake --install)
From the source tree:  CRITPLEX_LIBRARY=build/capi/libcritplex.so.1 PYTHONPATH=plugins/python python3 examples/hosts/python_example.py
"""
import os
import tempfile

import numpy as np

import critplex

with tempfile.TemporaryDirectory() as tmp:
    study = critplex.simulate_study(os.path.join(tmp, "study"), regions=40, frames=300,
                                    groups=[{"name": "rested", "subjects": 3}, {"name": "deprived", "subjects": 3}])
    series = critplex.read_series(os.path.join(study.dir, "timeseries", "sub-rested01_timeseries.tsv"))
    matrix = critplex.connect(series, method="ledoit_wolf", sampling_interval=0.8)
    print(matrix, "shrinkage intensity", matrix.info["shrinkage_intensity"])
    result = critplex.sweep(matrix, max_density=0.4, grid=0.02, homology={"max_dimension": 2}, curvature={})
    curves = result.curves()                      # dict of numpy arrays; .to_frame() with pandas
    print("first chi zero near density", result.transitions()["first_chi_zero"])
    print(np.column_stack([curves["density"], curves["chi"], curves["betti_1"]])[:8])
    run = critplex.run_cohort(study.manifest, study.config_path, os.path.join(tmp, "results"))
    comparison = critplex.compare(run.out_dir)
    for summary, p in zip(comparison.tests["summary"], comparison.tests["p_value"]):
        print("%-40s p = %.3g" % (summary, p))
    print("report:", critplex.report(run.out_dir).path)
