"""Pearson correlation and Fisher z of real resting-state fMRI region time series
against numpy, through the ctypes binding (the foreign-function route of MATLAB, R, Julia).

Data: nitime's data/fmri_timeseries.csv (Debian python3-nitime): 250 frames x 31 columns,
the first three of which are nuisance signals (white matter, ventricles, whole brain).
"""
import os
import unittest

import numpy as np
import nitime

import critplex

NITIME_CSV = os.path.join(os.path.dirname(nitime.__file__), "data", "fmri_timeseries.csv")


class PearsonAgainstNumpy(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        cls.data = np.genfromtxt(NITIME_CSV, delimiter=",", skip_header=1)
        with open(NITIME_CSV) as f:
            cls.names = [n.strip('"') for n in f.readline().strip().split(",")]

    def test_file_reading_matches_numpy_loader(self):
        s = critplex.read_series(NITIME_CSV)
        self.assertEqual(s.shape, (250, 31))
        self.assertEqual(s.names, self.names)
        np.testing.assert_array_equal(s.values, self.data)

    def test_pearson_equals_numpy_corrcoef(self):
        # reference: numpy.corrcoef (Debian python3-numpy), rowvar=False: regions are columns
        m = critplex.connect(critplex.read_series(NITIME_CSV))
        expected = np.corrcoef(self.data, rowvar=False)
        self.assertLess(np.max(np.abs(m.values - expected)), 1e-12)
        self.assertEqual(m.names, self.names)
        np.testing.assert_array_equal(m.values, m.values.T)

    def test_fisher_z_equals_numpy_arctanh(self):
        # reference: numpy.arctanh applied to numpy.corrcoef off the diagonal
        z = critplex.connect(critplex.read_series(NITIME_CSV), fisher_z=True).values
        expected = np.arctanh(np.corrcoef(self.data, rowvar=False))
        off = ~np.eye(31, dtype=bool)
        self.assertLess(np.max(np.abs(z[off] - expected[off])), 1e-12)
        np.testing.assert_array_equal(np.diag(z), 0.0)

    def test_column_major_buffers(self):
        # The same data handed over column-major (as MATLAB, R and Julia hold it).
        s = critplex.Series.from_array(np.asfortranarray(self.data))
        np.testing.assert_array_equal(s.values, self.data)


if __name__ == "__main__":
    unittest.main(verbosity=2)
