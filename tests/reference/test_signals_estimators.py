"""Connectivity estimators against outside references, on nitime's real fMRI series.

Each check names its reference. Run by ctest with /usr/bin/python3 (Debian packages)."""
import os
import subprocess
import tempfile
import unittest

import numpy as np

from signals_support import CritplexError, Series, connect, nitime_fmri


class Estimators(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        _, data, _ = nitime_fmri()
        cls.regions = data[:, 3:]          # 250 frames x 28 regions of interest
        cls.series = Series.from_array(cls.regions)

    def test_pearson(self):
        # reference: numpy.corrcoef (Debian python3-numpy)
        r, info = connect(self.series, {"method": "pearson"})
        np.testing.assert_allclose(r, np.corrcoef(self.regions, rowvar=False), atol=1e-12)
        self.assertEqual(info["frames_used"], 250)

    def test_fisher_z(self):
        # reference: numpy.arctanh of numpy.corrcoef; Fisher z = atanh(r) (docs/methods.md)
        z, _ = connect(self.series, {"method": "pearson", "fisher_z": True})
        r = np.corrcoef(self.regions, rowvar=False)
        np.fill_diagonal(r, 0.0)
        ref = np.arctanh(r)
        off = ~np.eye(28, dtype=bool)
        np.testing.assert_allclose(z[off], ref[off], atol=1e-10)
        np.testing.assert_array_equal(np.diag(z), 0.0)

    def _sklearn_check(self, method, estimator):
        r, info = connect(self.series, {"method": method})
        est = estimator().fit(self.regions)
        cov = est.covariance_
        d = np.sqrt(np.diag(cov))
        np.testing.assert_allclose(r, cov / np.outer(d, d), atol=1e-10)
        self.assertAlmostEqual(info["shrinkage_intensity"], est.shrinkage_, delta=1e-10)

    def test_ledoit_wolf(self):
        # reference: sklearn.covariance.LedoitWolf (Debian python3-sklearn), covariance -> correlation
        from sklearn.covariance import LedoitWolf
        self._sklearn_check("ledoit_wolf", LedoitWolf)

    def test_oas(self):
        # reference: sklearn.covariance.OAS (Debian python3-sklearn)
        from sklearn.covariance import OAS
        self._sklearn_check("oas", OAS)

    def test_ledoit_wolf_few_frames(self):
        # More regions than frames (the regime shrinkage is for): 20 frames x 28 regions.
        # reference: sklearn.covariance.LedoitWolf
        from sklearn.covariance import LedoitWolf
        x = self.regions[:20]
        r, info = connect(Series.from_array(x), {"method": "ledoit_wolf"})
        est = LedoitWolf().fit(x)
        d = np.sqrt(np.diag(est.covariance_))
        np.testing.assert_allclose(r, est.covariance_ / np.outer(d, d), atol=1e-10)
        self.assertAlmostEqual(info["shrinkage_intensity"], est.shrinkage_, delta=1e-10)

    def test_schafer_strimmer(self):
        # reference: R corpcor::cor.shrink (Debian r-cran-corpcor), lambda and matrix
        for frames in (250, 20):
            x = self.regions[:frames]
            with tempfile.TemporaryDirectory() as tmp:
                src = os.path.join(tmp, "x.tsv")
                np.savetxt(src, x, delimiter="\t")
                out = os.path.join(tmp, "r.tsv")
                script = ("suppressMessages(library(corpcor)); x <- as.matrix(read.table('%s'));"
                          "r <- cor.shrink(x, verbose=FALSE); write.table(unclass(r), '%s', row.names=FALSE,"
                          "col.names=FALSE); cat(sprintf('%%.17g', attr(r, 'lambda')))" % (src, out))
                done = subprocess.run(["Rscript", "-e", script], capture_output=True, text=True, check=True)
                lam = float(done.stdout.strip().split()[-1])
                ref = np.loadtxt(out)
            r, info = connect(Series.from_array(x), {"method": "shrinkage_correlation"})
            self.assertAlmostEqual(info["shrinkage_intensity"], lam, delta=1e-10)
            np.testing.assert_allclose(r, ref, atol=1e-10)

    def test_partial_from_ledoit_wolf(self):
        # reference: numpy.linalg.inv of sklearn's LedoitWolf covariance; partial correlation
        # -P_ij / sqrt(P_ii P_jj) (docs/methods.md)
        from sklearn.covariance import LedoitWolf
        r, info = connect(self.series, {"method": "partial"})
        p = np.linalg.inv(LedoitWolf().fit(self.regions).covariance_)
        d = np.sqrt(np.diag(p))
        ref = -p / np.outer(d, d)
        np.fill_diagonal(ref, 1.0)
        np.testing.assert_allclose(r, ref, atol=1e-9)
        self.assertEqual(info["partial_basis"], "ledoit_wolf")

    def test_partial_plain(self):
        # reference: numpy.linalg.inv of numpy.cov
        r, _ = connect(self.series, {"method": "partial", "partial_basis": "sample"})
        p = np.linalg.inv(np.cov(self.regions, rowvar=False))
        d = np.sqrt(np.diag(p))
        ref = -p / np.outer(d, d)
        np.fill_diagonal(ref, 1.0)
        np.testing.assert_allclose(r, ref, atol=1e-9)

    def test_partial_plain_too_few_frames(self):
        # T <= N: the sample covariance is singular; the error suggests shrinkage.
        few = Series.from_array(self.regions[:28])
        with self.assertRaises(CritplexError) as caught:
            connect(few, {"method": "partial", "partial_basis": "sample"})
        self.assertIn("ledoit_wolf", str(caught.exception))
        self.assertIn("28 frames", str(caught.exception))
        r, _ = connect(few, {"method": "partial"})  # the shrunk route works
        self.assertTrue(np.all(np.isfinite(r)))

    def test_unknown_option(self):
        with self.assertRaises(CritplexError) as caught:
            connect(self.series, {"method": "pearson", "shrinkage": 0.1})
        self.assertIn("shrinkage", str(caught.exception))


if __name__ == "__main__":
    unittest.main()
