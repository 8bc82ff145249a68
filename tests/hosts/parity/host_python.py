"""Parity run in Python: cohort, compare and report through the installed package, then
the group-test table as this host holds it, written to TABLE.
    python host_python.py MANIFEST CONFIG OUT TABLE"""
import math
import sys

import numpy as np

import critplex

manifest, config, out, table_path = sys.argv[1:5]
run = critplex.run_cohort(manifest, config, out)
assert run.failed == 0, run.failures
comparison = critplex.compare(out, covariates=["age"])
report = critplex.report(out, created="parity")


def cell(v):
    if isinstance(v, np.generic):
        v = v.item()
    if v is None or (isinstance(v, float) and math.isnan(v)):
        return "n/a"
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, float):
        return repr(v)
    return str(v)


tests = comparison.tests
with open(table_path, "w") as f:
    f.write("\t".join(tests) + "\n")
    for i in range(tests.rows):
        f.write("\t".join(cell(tests[name][i]) for name in tests) + "\n")
print("python: %d subjects, %d tests, report %s" % (run.done + run.skipped, tests.rows, report.path))
