"""Connectivity at the edges of double precision (issue 13): regions near 1e160 or 1e-170
give the same Pearson, shrinkage and partial matrices as ordinary data, and a matrix that
cannot be represented is refused with an error naming the regions, never written with NaN.

References: numpy.corrcoef (Debian python3-numpy) and sklearn.covariance.LedoitWolf / OAS
(Debian python3-sklearn), computed on the data before scaling (correlation does not depend
on a region's scale, shrinkage correlations not on a common scale: common practice)."""
import unittest

import numpy as np

from signals_support import CritplexError, Series, connect, nitime_fmri


class NumericRange(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        _, data, _ = nitime_fmri()
        cls.x = data[:, 3:13]  # 250 frames x 10 regions of a real fMRI series

    def check_pearson(self, scaled):
        # reference: numpy.corrcoef on the unscaled data (Debian python3-numpy)
        r, _ = connect(Series.from_array(scaled), {"method": "pearson"})
        np.testing.assert_allclose(r, np.corrcoef(self.x, rowvar=False), atol=1e-12)

    def test_pearson_huge_and_tiny(self):
        for scale in (1e160, 1e-170, 1e300, 1e-300):
            self.check_pearson(self.x * scale)

    def test_pearson_regions_of_very_different_magnitude(self):
        factors = np.array([1e160, 1e-170, 1.0, 3e150, 1e-160, 7.0, 1e-5, 1e100, 2e-200, 1e10])
        self.check_pearson(self.x * factors)

    def test_pearson_with_trend_and_band(self):
        # cleaning (trend regression) and the filter are linear: a scale changes nothing
        options = {"method": "pearson", "clean": {"trend_order": 1}, "bands": {"slow": [0.01, 0.2]},
                   "sampling_interval": 2.0}
        plain, _ = connect(Series.from_array(self.x), options)
        for scale in (1e160, 1e-170):
            r, _ = connect(Series.from_array(self.x * scale), options)
            np.testing.assert_allclose(r, plain, atol=1e-12)

    def test_shrinkage_huge_and_tiny(self):
        # reference: sklearn.covariance.LedoitWolf / OAS on the unscaled data, covariance -> correlation
        from sklearn.covariance import OAS, LedoitWolf
        for method, estimator in (("ledoit_wolf", LedoitWolf), ("oas", OAS)):
            est = estimator().fit(self.x)
            d = np.sqrt(np.diag(est.covariance_))
            ref = est.covariance_ / np.outer(d, d)
            for scale in (1e160, 1e-170):
                r, info = connect(Series.from_array(self.x * scale), {"method": method})
                np.testing.assert_allclose(r, ref, atol=1e-10)
                self.assertAlmostEqual(info["shrinkage_intensity"], est.shrinkage_, delta=1e-10)

    def test_partial_huge_and_tiny(self):
        # reference: numpy.linalg.inv of sklearn's LedoitWolf covariance; partial correlation
        # -P_ij / sqrt(P_ii P_jj) (common practice)
        from sklearn.covariance import LedoitWolf
        p = np.linalg.inv(LedoitWolf().fit(self.x).covariance_)
        d = np.sqrt(np.diag(p))
        ref = -p / np.outer(d, d)
        np.fill_diagonal(ref, 1.0)
        for scale in (1e160, 1e-170):
            r, _ = connect(Series.from_array(self.x * scale), {"method": "partial"})
            np.testing.assert_allclose(r, ref, atol=1e-9)

    def test_unit_variance_huge(self):
        # reference: numpy.corrcoef; standardising does not change a correlation
        r, _ = connect(Series.from_array(self.x * 1e160), {"method": "pearson", "clean": {"unit_variance": True}})
        np.testing.assert_allclose(r, np.corrcoef(self.x, rowvar=False), atol=1e-12)

    def test_unrepresentable_is_refused(self):
        # Ledoit-Wolf needs one common scale: regions 1e300 apart cannot share it.
        factors = np.ones(10)
        factors[0], factors[1] = 1e150, 1e-160
        with self.assertRaises(CritplexError) as caught:
            connect(Series.from_array(self.x * factors), {"method": "ledoit_wolf"})
        self.assertEqual(caught.exception.status, 4)  # CPX_ERR_DATA
        message = str(caught.exception)
        self.assertIn("regions 'R1' and 'R2' differ in magnitude", message)
        # the same data standardised per region are fine (reference: numpy.corrcoef)
        r, _ = connect(Series.from_array(self.x * factors), {"method": "pearson"})
        np.testing.assert_allclose(r, np.corrcoef(self.x, rowvar=False), atol=1e-12)


if __name__ == "__main__":
    unittest.main()
