"""The Python package as a user gets it: pip-installed from an install prefix into a fresh
virtual environment, imported from a folder outside the source tree, with no
CRITPLEX_LIBRARY, PYTHONPATH or PKG_CONFIG_PATH set.

Run by tests/hosts/run_hosts.sh with the virtual environment's python:
    VENV/bin/python test_python.py PREFIX WORK
"""
import inspect
import os
import shutil
import subprocess
import sys
import tempfile
import unittest

import numpy as np
import nitime

import critplex

PREFIX = os.path.abspath(sys.argv[1])
WORK = os.path.abspath(sys.argv[2])
SOURCE = os.path.abspath(os.path.join(os.path.dirname(__file__), "..", ".."))
NITIME_CSV = os.path.join(os.path.dirname(nitime.__file__), "data", "fmri_timeseries.csv")
CLEAN_ENV = {k: v for k, v in os.environ.items() if k not in ("CRITPLEX_LIBRARY", "PYTHONPATH", "PKG_CONFIG_PATH",
                                                              "LD_LIBRARY_PATH")}


def run_python(code, env=None, cwd=None):
    return subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=env or CLEAN_ENV,
                          cwd=cwd or WORK)


def four_cycle_first():
    """A 4-cycle enters before the two diagonals, so chi passes through exactly 0."""
    m = np.eye(4)
    for (i, j, w) in [(0, 1, .9), (1, 2, .8), (2, 3, .7), (3, 0, .6), (0, 2, .2), (1, 3, .1)]:
        m[i, j] = m[j, i] = w
    return m


class Installed(unittest.TestCase):
    def test_imported_from_the_environment_with_the_prefix_library(self):
        self.assertFalse(os.path.realpath(critplex.__file__).startswith(os.path.join(SOURCE, "plugins") + os.sep),
                         critplex.__file__)
        self.assertIn("site-packages", critplex.__file__)
        self.assertTrue(os.path.realpath(critplex.library_path()).startswith(os.path.realpath(PREFIX)))
        self.assertEqual(critplex.__version__, "0.3.0")
        self.assertEqual(critplex.abi_version(), critplex.ABI_VERSION)
        self.assertEqual(critplex.version().split(".")[:2], critplex.__version__.split(".")[:2])

    def test_every_public_function_has_a_numpy_style_docstring(self):
        for name in critplex.__all__:
            obj = getattr(critplex, name)
            if inspect.isfunction(obj):
                doc = inspect.getdoc(obj) or ""
                self.assertTrue(doc, name)
                if inspect.signature(obj).parameters:
                    self.assertIn("Parameters\n----------", doc, name)
                self.assertIn("Returns\n-------", doc, name)


class Discovery(unittest.TestCase):
    def test_abi_mismatch_stops_the_import(self):
        # A stand-in library reporting another ABI.
        src = os.path.join(WORK, "abi99.c")
        with open(src, "w") as f:
            f.write('int cpx_abi_version(void) { return 99; }\nconst char* cpx_version(void) { return "9.0.0"; }\n')
        lib = os.path.join(WORK, "libabi99.so")
        subprocess.run(["cc", "-shared", "-fPIC", "-o", lib, src], check=True)
        p = run_python("import critplex", env=dict(CLEAN_ENV, CRITPLEX_LIBRARY=lib))
        self.assertNotEqual(p.returncode, 0)
        self.assertIn("AbiMismatch", p.stderr)
        self.assertIn("written for ABI 1", p.stderr)
        self.assertIn("reports ABI 99", p.stderr)

    def test_explicit_path_that_fails_is_named(self):
        p = run_python("import critplex\ncritplex.connect([[1, 2], [2, 1], [3, 3]])",
                       env=dict(CLEAN_ENV, CRITPLEX_LIBRARY=os.path.join(WORK, "missing", "libcritplex.so.1")))
        self.assertNotEqual(p.returncode, 0)
        self.assertIn("LibraryNotFound", p.stderr)
        self.assertIn("missing/libcritplex.so.1", p.stderr)
        self.assertIn("CRITPLEX_LIBRARY", p.stderr)

    def package_copy_without_record(self):
        """The installed package, copied elsewhere without the library folder cmake recorded."""
        target = tempfile.mkdtemp(dir=WORK)
        shutil.copytree(os.path.dirname(critplex.__file__), os.path.join(target, "critplex"),
                        ignore=shutil.ignore_patterns("_installed_at.py", "__pycache__"))
        return target

    def test_found_through_pkg_config(self):
        copy = self.package_copy_without_record()
        pkgconfig = os.path.dirname(subprocess.run(["find", PREFIX, "-name", "critplex.pc"], capture_output=True,
                                                   text=True, check=True).stdout.split()[0])
        p = run_python("import critplex\nprint(critplex.library_path())",
                       env=dict(CLEAN_ENV, PYTHONPATH=copy, PKG_CONFIG_PATH=pkgconfig))
        self.assertEqual(p.returncode, 0, p.stderr)
        self.assertTrue(os.path.realpath(p.stdout.strip()).startswith(os.path.realpath(PREFIX)), p.stdout)

    def test_not_found_lists_every_place_and_the_fix(self):
        import ctypes.util
        if ctypes.util.find_library("critplex"):
            self.skipTest("a libcritplex is installed where the system loader finds it")
        copy = self.package_copy_without_record()
        p = run_python("import critplex\ncritplex.connect([[1, 2], [2, 1], [3, 3]])",
                       env=dict(CLEAN_ENV, PYTHONPATH=copy, PKG_CONFIG_PATH=os.path.join(WORK, "nothing")))
        self.assertNotEqual(p.returncode, 0)
        for place in ("CRITPLEX_LIBRARY: not set", "the prefix this package sits in", "pkg-config critplex",
                      "the system loader", "To fix"):
            self.assertIn(place, p.stderr)


class Arrays(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        cls.data = np.genfromtxt(NITIME_CSV, delimiter=",", skip_header=1)

    def test_connect_equals_numpy_corrcoef_on_nitime_fmri(self):
        # reference: numpy.corrcoef (Debian python3-numpy) on nitime's fMRI region series
        m = critplex.connect(self.data)
        self.assertLess(np.max(np.abs(m.values - np.corrcoef(self.data, rowvar=False))), 1e-12)
        self.assertEqual(m.info["method"], "pearson")
        self.assertIn("Matrix 31 x 31", repr(m))

    def test_sweep_returns_arrays(self):
        s = critplex.sweep(four_cycle_first(), grid="every", curvature={}, homology={"max_dimension": 1})
        curves = s.curves()
        self.assertIsInstance(curves["chi"], np.ndarray)
        np.testing.assert_array_equal(curves["chi"], [4, 3, 2, 1, 0, 1, 1])
        # reference: V - E + F of the flag complex, counted by hand (common practice)
        np.testing.assert_array_equal(curves["chi"], curves["cliques_0"] - curves["cliques_1"] + curves["cliques_2"]
                                      - curves["cliques_3"])
        zero = curves["chi"] == 0
        self.assertTrue(np.all(np.isneginf(curves["log_abs_chi"][zero])))
        np.testing.assert_allclose(curves["log_abs_chi"][~zero], np.log(np.abs(curves["chi"][~zero])), rtol=1e-15)
        self.assertTrue(np.isnan(curves["threshold"][0]))
        bars = s.bars()
        self.assertTrue(np.any((bars["dimension"] == 0) & np.isposinf(bars["death_density"])))
        self.assertEqual(s.node_curvature().shape, (7, 4))
        self.assertEqual(list(curves), s.columns)
        self.assertIn("7 grid points", repr(s))

    def test_progress_callback_cancels(self):
        fractions = []
        with self.assertRaises(critplex.CritplexError) as e:
            critplex.sweep(np.corrcoef(self.data, rowvar=False), grid="every",
                           progress=lambda f: fractions.append(f) or True)
        self.assertEqual(e.exception.status, "CPX_ERR_CANCELLED")
        self.assertTrue(fractions and all(0 <= f <= 1 for f in fractions))

    def test_pandas_round_trip_keeps_region_names(self):
        import pandas as pd
        frame = pd.read_csv(NITIME_CSV)
        m = critplex.connect(frame)
        self.assertEqual(m.names, list(frame.columns))
        out = m.to_frame()
        self.assertEqual(list(out.index), list(frame.columns))
        self.assertEqual(list(out.columns), list(frame.columns))
        # reference: pandas.DataFrame.corr (Debian python3-pandas), Pearson
        self.assertLess(float(np.max(np.abs(out.values - frame.corr().values))), 1e-12)
        s = critplex.sweep(out, max_density=0.2, grid=0.05)
        self.assertEqual(s.document()["names"], list(frame.columns))
        curves = s.to_frame()
        self.assertEqual(list(curves.columns), s.columns)
        self.assertEqual(len(curves), 5)
        series = critplex.Series.from_array(frame)
        self.assertEqual(list(series.to_frame().columns), list(frame.columns))


if __name__ == "__main__":
    unittest.main(argv=sys.argv[:1], verbosity=2)
