"""Image readers against files written by nibabel (Debian python3-nibabel): NIfTI-1 and
NIfTI-2 4-D images with label atlases (regional means compared with numpy), a CIFTI-2
dense series (BrainModelAxis) with a dense label file (LabelAxis), and a CIFTI-2
parcellated series (ParcelsAxis) whose region names must survive, through the C call
cpx_series_read_image and through `critplex connect`. Files are made at test time from
invented values."""
import ctypes
import json
import os
import subprocess
import tempfile
import unittest

import numpy as np

LIB = ctypes.CDLL(os.environ["CRITPLEX_LIBRARY"])
P = ctypes.c_void_p
LIB.cpx_last_error.restype = ctypes.c_char_p
LIB.cpx_series_read_image.argtypes = [ctypes.c_char_p, ctypes.c_char_p, ctypes.c_char_p, ctypes.POINTER(P)]
LIB.cpx_series_free.argtypes = [P]
LIB.cpx_series_shape.argtypes = [P, ctypes.POINTER(ctypes.c_size_t), ctypes.POINTER(ctypes.c_size_t)]
LIB.cpx_series_copy.argtypes = [P, P, ctypes.c_size_t, ctypes.c_int]
LIB.cpx_series_region_name.argtypes = [P, ctypes.c_size_t, ctypes.POINTER(P)]
LIB.cpx_series_sampling_interval.argtypes = [P, ctypes.POINTER(ctypes.c_double)]
LIB.cpx_string_free.argtypes = [P]


class ReadError(Exception):
    def __init__(self, status, message):
        super().__init__(message)
        self.status = status


def read_image(image, labels=None, options=None):
    """(values T x N, names, sampling interval) through cpx_series_read_image."""
    h = P()
    status = LIB.cpx_series_read_image(image.encode(), None if labels is None else labels.encode(),
                                       json.dumps(options or {}).encode(), ctypes.byref(h))
    if status != 0:
        raise ReadError(status, LIB.cpx_last_error().decode())
    try:
        t, n = ctypes.c_size_t(), ctypes.c_size_t()
        LIB.cpx_series_shape(h, ctypes.byref(t), ctypes.byref(n))
        values = np.empty((t.value, n.value))
        LIB.cpx_series_copy(h, values.ctypes.data, values.size, 0)
        names = []
        for i in range(n.value):
            p = P()
            LIB.cpx_series_region_name(h, i, ctypes.byref(p))
            names.append(ctypes.cast(p, ctypes.c_char_p).value.decode())
            LIB.cpx_string_free(p)
        dt = ctypes.c_double()
        LIB.cpx_series_sampling_interval(h, ctypes.byref(dt))
        return values, names, dt.value
    finally:
        LIB.cpx_series_free(h)


class NiftiVolumes(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        import nibabel as nib
        cls.nib = nib
        cls.tmp = tempfile.TemporaryDirectory()
        rng = np.random.default_rng(17)
        cls.data = (rng.standard_normal((7, 6, 5, 30)) * 20 + 300).astype(np.float32)
        labels = np.zeros((7, 6, 5), dtype=np.int16)
        labels[:3, :, :3] = 4
        labels[3:, :3, :] = 11
        labels[3:, 3:, 2:] = 12
        labels[0, 0, 4] = 30
        cls.labels = labels
        cls.affine = np.diag([2.0, 2.0, 2.5, 1.0])

    @classmethod
    def tearDownClass(cls):
        cls.tmp.cleanup()

    def path(self, name):
        return os.path.join(self.tmp.name, name)

    def expected(self, data):
        # reference: numpy means over each label's voxels of the array nibabel reads back
        return np.stack([data[self.labels == k].mean(axis=0) for k in (4, 11, 12, 30)], axis=1)

    def test_nifti1_and_nifti2_gzip_and_byte_orders(self):
        nib = self.nib
        cases = [
            ("n1.nii.gz", nib.Nifti1Image, nib.Nifti1Header, "<"),
            ("n2.nii", nib.Nifti2Image, nib.Nifti2Header, "<"),
            ("n2_big.nii.gz", nib.Nifti2Image, nib.Nifti2Header, ">"),
            ("n1_big.nii", nib.Nifti1Image, nib.Nifti1Header, ">"),
        ]
        for name, image_class, header_class, endian in cases:
            with self.subTest(name=name):
                img = image_class(self.data, self.affine, header_class(endianness=endian))
                img.header.set_xyzt_units("mm", "msec")
                img.header["pixdim"][4] = 800.0
                nib.save(img, self.path(name))
                atlas_name = "atlas_" + name
                nib.save(image_class(self.labels, self.affine, header_class(endianness=endian)), self.path(atlas_name))
                values, names, dt = read_image(self.path(name), self.path(atlas_name))
                reread = np.asarray(nib.load(self.path(name)).get_fdata())
                np.testing.assert_allclose(values, self.expected(reread), rtol=1e-12)
                self.assertEqual(names, ["label-4", "label-11", "label-12", "label-30"])
                self.assertAlmostEqual(dt, 0.8, places=9)  # 800 ms (xyzt_units)

    def test_nifti2_scaled_integers_with_a_nifti1_atlas(self):
        # int16 voxels with scl_slope / scl_inter: nibabel applies the same scaling on read
        nib = self.nib
        img = nib.Nifti2Image(np.round(self.data * 10 - 3000).astype(np.int16), self.affine)
        img.header.set_slope_inter(0.1, 300.0)
        nib.save(img, self.path("scaled.nii"))
        nib.save(nib.Nifti1Image(self.labels.astype(np.float32), self.affine), self.path("atlas_f32.nii"))
        names = self.path("atlas.tsv")
        with open(names, "w") as f:
            f.write("index\tname\n4\tfront\n11\tback low\n12\tback high\n30\tcorner\n")
        values, region_names, _ = read_image(self.path("scaled.nii"), self.path("atlas_f32.nii"), {"label_names": names})
        reread = np.asarray(nib.load(self.path("scaled.nii")).get_fdata())
        np.testing.assert_allclose(values, self.expected(reread), rtol=1e-12)
        self.assertEqual(region_names, ["front", "back low", "back high", "corner"])

    def test_label_of_1e30_is_refused_naming_file_and_value(self):
        nib = self.nib
        bad = self.labels.astype(np.float32)
        bad[6, 5, 4] = 1e30
        nib.save(nib.Nifti1Image(bad, self.affine), self.path("bad_atlas.nii"))
        nib.save(nib.Nifti1Image(self.data, self.affine), self.path("plain.nii"))
        with self.assertRaises(ReadError) as caught:
            read_image(self.path("plain.nii"), self.path("bad_atlas.nii"))
        message = str(caught.exception)
        self.assertIn("bad_atlas.nii", message)
        self.assertIn("voxel (6, 5, 4) holds 1.0000000150474662e+30, not an integer label", message)


class Cifti(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        import nibabel as nib
        from nibabel import cifti2
        cls.nib, cls.cifti2 = nib, cifti2
        cls.tmp = tempfile.TemporaryDirectory()
        rng = np.random.default_rng(29)
        # Brainordinates: 9 of 12 left-cortex vertices, 7 of 10 right-cortex vertices and 6
        # voxels of a 3 x 3 x 2 grid.
        left = np.zeros(12, bool)
        left[[0, 1, 2, 4, 5, 7, 8, 10, 11]] = True
        right = np.zeros(10, bool)
        right[[1, 2, 3, 5, 6, 8, 9]] = True
        mask = np.zeros((3, 3, 2), bool)
        mask[[0, 1, 2, 0, 2, 1], [0, 1, 2, 2, 0, 1], [0, 0, 1, 1, 1, 1]] = True
        affine = np.array([[2.0, 0, 0, -3], [0, 2.0, 0, -3], [0, 0, 2.0, -2], [0, 0, 0, 1]])
        cls.brain = (cifti2.BrainModelAxis.from_mask(left, name="CortexLeft")
                     + cifti2.BrainModelAxis.from_mask(right, name="CortexRight")
                     + cifti2.BrainModelAxis.from_mask(mask, affine=affine, name="ThalamusLeft"))
        cls.n = len(cls.brain)
        cls.frames = 40
        cls.series_axis = cifti2.SeriesAxis(start=0.0, step=0.72, size=cls.frames, unit="second")
        cls.data = (rng.standard_normal((cls.frames, cls.n)) * 5 + 100).astype(np.float32)
        cls.dtseries = os.path.join(cls.tmp.name, "sub-01_task-rest.dtseries.nii")
        cifti2.Cifti2Image(cls.data, header=(cls.series_axis, cls.brain)).to_filename(cls.dtseries)

        # The atlas covers the same vertices plus two more, in another model order
        # (volume first), so brainordinates must be matched by vertex and voxel.
        left_atlas = left.copy()
        left_atlas[[3, 6]] = True
        cls.atlas_brain = (cifti2.BrainModelAxis.from_mask(mask, affine=affine, name="ThalamusLeft")
                           + cifti2.BrainModelAxis.from_mask(right, name="CortexRight")
                           + cifti2.BrainModelAxis.from_mask(left_atlas, name="CortexLeft"))
        keys = rng.choice([0, 3, 8, 21], size=len(cls.atlas_brain), p=[0.1, 0.3, 0.3, 0.3]).astype(np.float32)
        extra = [i for i, (s, v) in enumerate(zip(cls.atlas_brain.name, cls.atlas_brain.vertex))
                 if s == "CIFTI_STRUCTURE_CORTEX_LEFT" and v in (3, 6)]
        keys[extra] = 0  # the vertices the series lacks hold no label
        cls.atlas_keys = keys
        table = {0: ("???", (0, 0, 0, 0)), 3: ("frontal & motor", (1, 0, 0, 1)),
                 8: ("Sehrinde (visual)", (0, 1, 0, 1)), 21: ("thalamus", (0, 0, 1, 1))}
        label_axis = cifti2.LabelAxis(["parcellation"], table)
        cls.dlabel = os.path.join(cls.tmp.name, "atlas.dlabel.nii")
        cifti2.Cifti2Image(keys[None, :], header=(label_axis, cls.atlas_brain)).to_filename(cls.dlabel)

        # Parcellated series: parcels built from the brain models, with names to keep.
        cls.parcel_names = ["L frontal", "R parietal & more", "Thalamus \u00e9t\u00e9", "L_V1"]
        parcels = cifti2.ParcelsAxis.from_brain_models([
            (cls.parcel_names[0], cls.brain[:4]), (cls.parcel_names[1], cls.brain[9:16]),
            (cls.parcel_names[2], cls.brain[16:]), (cls.parcel_names[3], cls.brain[4:9])])
        cls.pdata = (rng.standard_normal((cls.frames, 4)) * 3 + 50).astype(np.float32)
        cls.ptseries = os.path.join(cls.tmp.name, "sub-01_task-rest.ptseries.nii")
        cifti2.Cifti2Image(cls.pdata, header=(cls.series_axis, parcels)).to_filename(cls.ptseries)

    @classmethod
    def tearDownClass(cls):
        cls.tmp.cleanup()

    def reference_dense_means(self):
        # reference: nibabel's BrainModelAxis (structure, vertex, voxel) matched by hand,
        # numpy means over each label's brainordinates
        img = self.nib.load(self.dtseries)
        data = np.asarray(img.get_fdata())
        brain = img.header.get_axis(1)
        atlas = self.nib.load(self.dlabel)
        atlas_brain = atlas.header.get_axis(1)
        atlas_keys = np.asarray(atlas.get_fdata())[0]
        key_of = {}
        for s, v, vox, k in zip(atlas_brain.name, atlas_brain.vertex, atlas_brain.voxel, atlas_keys):
            key_of[(s, int(v)) if v >= 0 else ("voxel", tuple(int(x) for x in vox))] = int(k)
        per_brainordinate = np.array([key_of.get((s, int(v)) if v >= 0 else ("voxel", tuple(int(x) for x in vox)), 0)
                                      for s, v, vox in zip(brain.name, brain.vertex, brain.voxel)])
        labels = sorted(k for k in set(per_brainordinate) if k > 0)
        table = atlas.header.get_axis(0).label[0]
        means = np.stack([data[:, per_brainordinate == k].mean(axis=1) for k in labels], axis=1)
        return means, [table[k][0] for k in labels]

    def test_dense_series_with_dense_label_file(self):
        values, names, dt = read_image(self.dtseries, self.dlabel)
        expected, expected_names = self.reference_dense_means()
        np.testing.assert_allclose(values, expected, rtol=1e-12)
        self.assertEqual(names, expected_names)
        self.assertEqual(names, ["frontal & motor", "Sehrinde (visual)", "thalamus"])
        # reference: nibabel SeriesAxis step (SeriesStep x 10^SeriesExponent, unit SECOND)
        self.assertAlmostEqual(dt, self.nib.load(self.dtseries).header.get_axis(0).step, places=12)

    def test_parcellated_series_keeps_parcel_names(self):
        values, names, dt = read_image(self.ptseries)
        img = self.nib.load(self.ptseries)
        # reference: nibabel's get_fdata and ParcelsAxis.name
        np.testing.assert_array_equal(values, np.asarray(img.get_fdata()))
        self.assertEqual(names, [str(x) for x in img.header.get_axis(1).name])
        self.assertEqual(names, self.parcel_names)
        self.assertAlmostEqual(dt, 0.72, places=12)

    def test_mismatches_are_refused(self):
        cases = [
            (self.dtseries, None, "is a dense series: its regions need a dense label file"),
            (self.ptseries, self.dlabel, "is a parcellated series"),
            (self.dlabel, self.dtseries, "not a series"),
        ]
        for image, labels, fragment in cases:
            with self.subTest(fragment=fragment):
                with self.assertRaises(ReadError) as caught:
                    read_image(image, labels)
                self.assertIn(fragment, str(caught.exception))
                self.assertIn(os.path.basename(image), str(caught.exception))

    def test_cli_connect_ptseries_without_labels_and_dtseries_with_labels(self):
        cli = os.environ.get("CRITPLEX_CLI")
        if not cli:
            self.skipTest("CRITPLEX_CLI not set")
        out = os.path.join(self.tmp.name, "out")
        os.makedirs(out, exist_ok=True)
        run = subprocess.run([cli, "connect", self.ptseries, "--out", out + "/"], capture_output=True, text=True)
        self.assertEqual(run.returncode, 0, run.stderr)
        matrix_path = os.path.join(out, "sub-01_task-rest_connectivity.tsv")
        with open(matrix_path, encoding="utf-8") as f:
            header = f.readline().rstrip("\n").split("\t")
        self.assertEqual(header[1:], self.parcel_names)
        matrix = np.loadtxt(matrix_path, delimiter="\t", skiprows=1, usecols=range(1, 5))
        # reference: numpy.corrcoef of the parcel series nibabel reads back
        np.testing.assert_allclose(matrix, np.corrcoef(np.asarray(self.nib.load(self.ptseries).get_fdata()).T),
                                   rtol=1e-9, atol=1e-12)

        dense_out = os.path.join(self.tmp.name, "dense.tsv")
        run = subprocess.run([cli, "connect", self.dtseries, "--labels", self.dlabel, "--out", dense_out],
                             capture_output=True, text=True)
        self.assertEqual(run.returncode, 0, run.stderr)
        expected, names = self.reference_dense_means()
        dense = np.loadtxt(dense_out, delimiter="\t", skiprows=1, usecols=range(1, 4))
        np.testing.assert_allclose(dense, np.corrcoef(expected.T), rtol=1e-9, atol=1e-12)

        missing = subprocess.run([cli, "connect", self.dtseries, "--out", os.path.join(self.tmp.name, "no.tsv")],
                                 capture_output=True, text=True)
        self.assertNotEqual(missing.returncode, 0)
        self.assertIn("dense label file", missing.stderr)
        self.assertFalse(os.path.exists(os.path.join(self.tmp.name, "no.tsv")))


if __name__ == "__main__":
    unittest.main()
