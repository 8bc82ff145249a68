"""Inputs of the signals stage: confounds tables, censoring and NIfTI images, against
numpy and nibabel; bad inputs give clear errors and no output file.

Each check names its reference. Run by ctest with /usr/bin/python3 (Debian packages)."""
import os
import subprocess
import tempfile
import unittest

import numpy as np

from signals_support import CritplexError, Series, connect, nitime_fmri


def write_confounds(path, names, columns, missing_rows=()):
    with open(path, "w") as f:
        f.write("\t".join(names) + "\n")
        for t in range(len(columns[0])):
            cells = ["n/a" if t in missing_rows else repr(float(c[t])) for c in columns]
            f.write("\t".join(cells) + "\n")


class Confounds(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        header, data, _ = nitime_fmri()
        cls.names = [h.strip('"') for h in header]
        cls.nuisance = data[:, :3]       # white matter, ventricles, whole brain
        cls.regions = data[:, 3:]
        cls.tmp = tempfile.TemporaryDirectory()
        cls.table = os.path.join(cls.tmp.name, "confounds.tsv")
        motion = np.abs(np.sin(np.arange(250) * 0.37)) * 0.6   # invented displacement trace
        write_confounds(cls.table, cls.names[:3] + ["motion_fd"], [*cls.nuisance.T, motion], missing_rows=())
        cls.motion = motion
        cls.series = Series.from_array(cls.regions)

    @classmethod
    def tearDownClass(cls):
        cls.tmp.cleanup()

    def test_regression_residuals(self):
        # reference: numpy.linalg.lstsq on [1, WM, Vent, Brain] (nitime's three nuisance columns)
        ours = self.series.clean({"clean": {"regressor_table": self.table,
                                            "regressor_columns": ["WM", "Vent", "Brain"]}}).values()
        design = np.column_stack([np.ones(250), self.nuisance])
        beta = np.linalg.lstsq(design, self.regions, rcond=None)[0]
        np.testing.assert_allclose(ours, self.regions - design @ beta, atol=1e-8)

    def test_patterns_and_trend(self):
        # Patterns: "V*" and "?rain" pick Vent and Brain. Quadratic trend on a centred time axis.
        # reference: numpy.linalg.lstsq on [1, Vent, Brain, u, u^2], u = linspace(-1, 1, T)
        ours = self.series.clean({"clean": {"regressor_table": self.table, "regressor_columns": ["V*", "?rain"],
                                            "trend_order": 2}}).values()
        u = np.linspace(-1, 1, 250)
        design = np.column_stack([np.ones(250), self.nuisance[:, 1:], u, u ** 2])
        beta = np.linalg.lstsq(design, self.regions, rcond=None)[0]
        np.testing.assert_allclose(ours, self.regions - design @ beta, atol=1e-8)

    def test_missing_cells(self):
        # n/a in the first row (as derivative columns have): zero by default, or the column mean.
        # reference: numpy.linalg.lstsq with the same replacement
        path = os.path.join(self.tmp.name, "gaps.tsv")
        write_confounds(path, ["WM", "Vent"], [self.nuisance[:, 0], self.nuisance[:, 1]], missing_rows=(0,))
        for policy in ("zero", "column_mean"):
            with self.subTest(policy=policy):
                ours = self.series.clean({"clean": {"regressor_table": path, "regressor_columns": ["WM", "Vent"],
                                                    "regressor_missing": policy}}).values()
                c = self.nuisance[:, :2].copy()
                c[0] = 0.0 if policy == "zero" else c[1:].mean(0)
                design = np.column_stack([np.ones(250), c])
                beta = np.linalg.lstsq(design, self.regions, rcond=None)[0]
                np.testing.assert_allclose(ours, self.regions - design @ beta, atol=1e-7)
        with self.assertRaises(CritplexError) as caught:
            self.series.clean({"clean": {"regressor_table": path, "regressor_columns": ["WM"],
                                         "regressor_missing": "error"}})
        self.assertIn("line 2", str(caught.exception))

    def test_censoring(self):
        # Frames with displacement > 0.5 are dropped; the fit uses the kept frames only.
        # reference: numpy.linalg.lstsq on the kept rows, then numpy.corrcoef
        options = {"clean": {"regressor_table": self.table, "regressor_columns": ["WM", "Vent", "Brain"],
                             "censor": {"motion_column": "motion_fd", "motion_limit": 0.5}}}
        keep = self.motion <= 0.5
        design = np.column_stack([np.ones(250), self.nuisance])[keep]
        beta = np.linalg.lstsq(design, self.regions[keep], rcond=None)[0]
        resid = self.regions[keep] - design @ beta
        ours = self.series.clean(options).values()
        np.testing.assert_allclose(ours, resid, atol=1e-8)
        r, info = connect(self.series, dict(options, method="pearson"))
        np.testing.assert_allclose(r, np.corrcoef(resid, rowvar=False), atol=1e-10)
        self.assertEqual(info["frames_used"], int(keep.sum()))

    def test_standardise(self):
        # reference: numpy mean and std(ddof=1)
        ours = self.series.clean({"clean": {"unit_variance": True}}).values()
        ref = (self.regions - self.regions.mean(0)) / self.regions.std(0, ddof=1)
        np.testing.assert_allclose(ours, ref, atol=1e-10)

    def test_errors(self):
        cases = [
            ({"regressor_table": self.table, "regressor_columns": ["CSF"]}, "no column matches 'CSF'"),
            ({"regressor_table": os.path.join(self.tmp.name, "absent.tsv"), "regressor_columns": ["WM"]},
             "absent.tsv"),
            ({"regressor_table": self.table, "regressor_columns": ["WM"],
              "censor": {"motion_column": "motion_fd", "motion_limit": 0.01, "min_frames": 100}}, "minimum of 100"),
            ({"regressor_table": self.table, "regressor_columns": ["WM", "WM*", "Vent", "Brain"],
              "trend_order": 1, "unknown": 1}, "unknown"),
        ]
        for clean, fragment in cases:
            with self.subTest(fragment=fragment):
                with self.assertRaises(CritplexError) as caught:
                    connect(self.series, {"clean": clean})
                self.assertIn(fragment, str(caught.exception))
        short = os.path.join(self.tmp.name, "short.tsv")
        write_confounds(short, ["WM"], [self.nuisance[:100, 0]])
        with self.assertRaises(CritplexError) as caught:
            connect(self.series, {"clean": {"regressor_table": short, "regressor_columns": ["WM"]}})
        self.assertIn("100 rows", str(caught.exception))


class Nifti(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        import nibabel as nib
        cls.nib = nib
        cls.tmp = tempfile.TemporaryDirectory()
        rng = np.random.default_rng(3)
        cls.data = rng.standard_normal((6, 5, 4, 40)).astype(np.float32) * 10 + 100
        cls.labels = np.zeros((6, 5, 4), dtype=np.int16)
        cls.labels[:3, :, :2] = 2
        cls.labels[3:, :2, :] = 5
        cls.labels[3:, 2:, 1:] = 9
        affine = np.diag([2.0, 2.0, 2.5, 1.0])
        img = nib.Nifti1Image(cls.data, affine)
        img.header.set_xyzt_units("mm", "sec")
        img.header["pixdim"][4] = 0.8
        cls.image = os.path.join(cls.tmp.name, "sub-01_task-rest_bold.nii.gz")
        nib.save(img, cls.image)
        cls.atlas = os.path.join(cls.tmp.name, "atlas.nii")
        nib.save(nib.Nifti1Image(cls.labels, affine), cls.atlas)
        cls.names = os.path.join(cls.tmp.name, "atlas.tsv")
        with open(cls.names, "w") as f:
            f.write("index\tname\n2\tleft_block\n5\tright_low\n9\tright_high\n")
        cls.affine = affine

    @classmethod
    def tearDownClass(cls):
        cls.tmp.cleanup()

    def save(self, name, array, affine=None, **header):
        path = os.path.join(self.tmp.name, name)
        img = self.nib.Nifti1Image(array, self.affine if affine is None else affine)
        self.nib.save(img, path)
        return path

    def test_regional_means(self):
        # reference: numpy means over the voxels of each label of arrays written by nibabel
        s = Series.read_image(self.image, self.atlas, {"label_names": self.names})
        ours = s.values()
        for column, label in enumerate([2, 5, 9]):
            ref = self.data[self.labels == label].astype(np.float64).mean(axis=0)
            np.testing.assert_allclose(ours[:, column], ref, rtol=1e-12)
        self.assertEqual(s.names(), ["left_block", "right_low", "right_high"])
        self.assertAlmostEqual(s.sampling_interval(), 0.8, places=6)

    def test_scaled_integers(self):
        # int16 voxels with scl_slope/scl_inter: nibabel applies the same scaling on read
        img = self.nib.Nifti1Image(np.round(self.data * 10).astype(np.int16), self.affine)
        img.header.set_slope_inter(0.1, 3.0)
        path = os.path.join(self.tmp.name, "scaled.nii")
        self.nib.save(img, path)
        ref_img = self.nib.load(path).get_fdata()
        ours = Series.read_image(path, self.atlas).values()
        for column, label in enumerate([2, 5, 9]):
            np.testing.assert_allclose(ours[:, column], ref_img[self.labels == label].mean(axis=0), rtol=1e-6)

    def test_errors(self):
        other_grid = self.save("grid.nii", np.ones((6, 5, 3), dtype=np.int16))
        fractional = self.save("frac.nii", self.labels.astype(np.float32) + 0.5)
        moved = self.affine.copy()
        moved[0, 3] = 10.0   # same voxel grid shifted by 10 mm
        shifted = self.save("shifted.nii", self.labels, affine=moved)
        complex_img = self.save("complex.nii", self.data[..., :3].astype(np.complex64))
        names_extra = os.path.join(self.tmp.name, "extra.tsv")
        with open(names_extra, "w") as f:
            f.write("2\tleft_block\n5\tright_low\n9\tright_high\n11\tnowhere\n")
        not_nifti = os.path.join(self.tmp.name, "bad.nii")
        with open(not_nifti, "wb") as f:
            f.write(b"\0" * 400)
        cases = [
            (self.image, other_grid, {}, "grids differ"),
            (self.image, fractional, {}, "not an integer label"),
            (self.image, shifted, {}, "voxel-to-world"),
            (self.image, self.atlas, {"label_names": names_extra}, "label 11 ('nowhere')"),
            (complex_img, self.atlas, {}, "complex64"),
            (not_nifti, self.atlas, {}, "bad.nii"),
            (self.image, os.path.join(self.tmp.name, "missing.nii.gz"), {}, "missing.nii.gz"),
        ]
        for image, labels, options, fragment in cases:
            with self.subTest(fragment=fragment):
                with self.assertRaises(CritplexError) as caught:
                    Series.read_image(image, labels, options)
                self.assertIn(fragment, str(caught.exception))

    def test_cli_no_output_on_error(self):
        cli = os.environ.get("CRITPLEX_CLI")
        if not cli:
            self.skipTest("CRITPLEX_CLI not set")
        out = os.path.join(self.tmp.name, "conn_{band}.tsv")
        bad = subprocess.run([cli, "connect", self.image, "--labels", self.atlas, "--out", out, "--options",
                              '{"bands": {"slow": [0.05, 0.2], "fast": [0.5, 0.7]}}'],
                             capture_output=True, text=True)
        self.assertNotEqual(bad.returncode, 0)
        self.assertIn("Nyquist", bad.stderr)   # 0.7 Hz >= Nyquist 0.625 Hz of 0.8 s
        self.assertEqual([f for f in os.listdir(self.tmp.name) if f.startswith("conn_")], [])
        good = subprocess.run([cli, "connect", self.image, "--labels", self.atlas, "--label-names", self.names,
                               "--out", self.tmp.name + "/", "--options",
                               '{"bands": {"slow": [0.05, 0.2], "fast": [0.2, 0.5]}}'],
                              capture_output=True, text=True)
        self.assertEqual(good.returncode, 0, good.stderr)
        for band in ("slow", "fast"):
            path = os.path.join(self.tmp.name, "sub-01_task-rest_band-%s_connectivity.tsv" % band)
            self.assertTrue(os.path.exists(path), path)


if __name__ == "__main__":
    unittest.main()
