"""`critplex simulate --layout bids` checked from outside: nibabel (Debian python3-nibabel)
reads every image we write (header fields, affine, data), and the file names, folders,
tables and sidecars follow the BIDS specification's rules, written out below with the
section they come from. No BIDS validator is available here; the rules are quoted from
memory of BIDS 1.9.0 (say so where a rule is cited). The data are invented (the demo model).
"""
import csv
import gzip
import json
import os
import re
import subprocess
import tempfile
import unittest

import nibabel as nib
import numpy as np

CLI = os.environ["CRITPLEX_CLI"]
PIPELINE = "critplex-simulate"

# reference: BIDS 1.9.0, Appendix "Entities" / entity table: the order in which entities
# appear in a file name (from memory). Later versions insert entities (e.g. atlas after
# chunk) without changing the relative order of these.
ENTITY_ORDER = ["sub", "ses", "sample", "task", "acq", "ce", "trc", "stain", "rec", "dir", "run", "mod",
                "echo", "flip", "inv", "mt", "part", "proc", "hemi", "space", "split", "recording",
                "chunk", "res", "den", "label", "desc"]
# reference: BIDS 1.9.0, "Common principles" > "Filenames" and "Definitions" (label: letters
# and digits only; a file name is key-label pairs joined by "_", then "_<suffix>", then the
# extension; the suffix is alphanumeric) (from memory).
LABEL = re.compile(r"^[a-zA-Z0-9]+$")
NAME = re.compile(r"^((?:[a-z]+-[a-zA-Z0-9]+_)*)([a-zA-Z0-9]+)(\.[a-z.]+)$")


def run(*args):
    p = subprocess.run([CLI, *args], capture_output=True, text=True)
    if p.returncode != 0:
        raise AssertionError(f"critplex {' '.join(args)} failed ({p.returncode}):\n{p.stdout}\n{p.stderr}")
    return p


def parse_name(name):
    """(entities as [(key, label)], suffix, extension) of a BIDS file name, or None."""
    m = NAME.match(name)
    if not m:
        return None
    pairs = [tuple(p.split("-", 1)) for p in m.group(1).rstrip("_").split("_")] if m.group(1) else []
    return pairs, m.group(2), m.group(3)


def read_tsv(path):
    with open(path, newline="") as f:
        return list(csv.reader(f, delimiter="\t"))


class SimulatedBidsDataset(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        cls.tmp = tempfile.TemporaryDirectory()
        cls.root = os.path.join(cls.tmp.name, "bids")
        cls.args = ["--subjects", "2", "--regions", "10", "--frames", "60", "--seed", "9"]
        cls.summary = run("simulate", "--layout", "bids", "--sessions", "2", "--out", cls.root, *cls.args).stdout
        cls.deriv = os.path.join(cls.root, "derivatives", PIPELINE)
        cls.files = []
        for folder, _, names in os.walk(cls.root):
            cls.files += [os.path.relpath(os.path.join(folder, n), cls.root) for n in names]
        cls.plain = os.path.join(cls.tmp.name, "tsv")
        run("simulate", "--out", cls.plain, *cls.args)

    @classmethod
    def tearDownClass(cls):
        cls.tmp.cleanup()

    def bold_files(self):
        return sorted(f for f in self.files if f.endswith("_desc-preproc_bold.nii.gz"))

    # --- naming rules -------------------------------------------------------------
    def test_every_derivative_file_name_follows_the_rules(self):
        checked = 0
        for rel in self.files:
            if not rel.startswith(os.path.join("derivatives", PIPELINE)):
                continue
            name = os.path.basename(rel)
            if name in ("dataset_description.json", "participants.tsv", "participants.json"):
                continue
            parsed = parse_name(name)
            self.assertIsNotNone(parsed, rel)
            entities, suffix, extension = parsed
            keys = [k for k, _ in entities]
            for key, label in entities:
                self.assertIn(key, ENTITY_ORDER, f"{rel}: unknown entity {key}")
                self.assertRegex(label, LABEL, rel)
            # reference: BIDS 1.9.0, Appendix "Entities": each entity at most once, in table order (from memory)
            self.assertEqual(len(keys), len(set(keys)), rel)
            self.assertEqual(keys, sorted(keys, key=ENTITY_ORDER.index), rel)
            # reference: BIDS 1.9.0, "Derivatives" > "Common data types" > "desc" is the last entity (from memory)
            if "desc" in keys:
                self.assertEqual(keys[-1], "desc", rel)
            parts = rel.split(os.sep)[2:]
            if parts[0].startswith("sub-"):
                # reference: BIDS 1.9.0, "Common principles" > "Directory structure":
                # sub-<label>/[ses-<label>/]<datatype>/ and the name repeats those labels (from memory)
                self.assertEqual(entities[0], ("sub", parts[0][4:]), rel)
                if parts[1].startswith("ses-"):
                    self.assertEqual(entities[1], ("ses", parts[1][4:]), rel)
                    self.assertEqual(parts[2], "func", rel)
                else:
                    self.assertEqual(parts[1], "func", rel)
                self.assertIn(suffix, ("bold", "timeseries"), rel)
            else:
                # dataset-level files at the derivatives root: the atlas and its lookup table
                self.assertEqual(suffix, "dseg", rel)
            checked += 1
        self.assertEqual(checked, 2 + 4 * 2 * 4)  # atlas + table; 4 subjects x 2 sessions x 4 files

    def test_run_names_entities_and_suffixes(self):
        bolds = self.bold_files()
        self.assertEqual(len(bolds), 8)
        for rel in bolds:
            entities, suffix, ext = parse_name(os.path.basename(rel))
            d = dict(entities)
            # reference: BIDS 1.9.0, "Modality specific files" > "MRI" > "Task (including
            # resting state) imaging data": task label letters and digits, suffix bold, .nii.gz (from memory)
            self.assertEqual((suffix, ext, d["task"]), ("bold", ".nii.gz", "rest"))
            # reference: BIDS 1.9.0, "Derivatives" > "Preprocessed or cleaned data": desc-preproc (from memory)
            self.assertEqual(d["desc"], "preproc")
            self.assertIn("space", d)
            # reference: common practice of preprocessing pipelines: the confounds table of a
            # run is <run entities>_desc-confounds_timeseries.tsv beside the image, without space
            run_part = "_".join(f"{k}-{v}" for k, v in entities if k in ("sub", "ses", "task"))
            self.assertIn(os.path.join(os.path.dirname(rel), run_part + "_desc-confounds_timeseries.tsv"), self.files)
            self.assertIn(rel.replace(".nii.gz", ".json"), self.files)

    def test_dataset_descriptions(self):
        # reference: BIDS 1.9.0, "Modality agnostic files" > "Dataset description": Name and
        # BIDSVersion REQUIRED; "Derivatives" > "Derivatives dataset description": DatasetType
        # "derivative" and GeneratedBy (a list whose entries have a Name) (from memory)
        with open(os.path.join(self.root, "dataset_description.json")) as f:
            raw = json.load(f)
        with open(os.path.join(self.deriv, "dataset_description.json")) as f:
            der = json.load(f)
        for doc in (raw, der):
            self.assertTrue(doc["Name"])
            self.assertRegex(doc["BIDSVersion"], r"^\d+\.\d+\.\d+$")
        self.assertEqual(raw["DatasetType"], "raw")
        self.assertEqual(der["DatasetType"], "derivative")
        self.assertEqual(der["GeneratedBy"][0]["Name"], PIPELINE)
        self.assertIn("Invented", der["GeneratedBy"][0]["Description"])

    def test_tables(self):
        # reference: BIDS 1.9.0, "Common principles" > "Tabular files": tab-separated, a header
        # row, the same number of cells in every row, n/a for a missing value (from memory)
        for rel in self.files:
            if not rel.endswith(".tsv") or not rel.startswith(("derivatives", "participants")):
                continue
            rows = read_tsv(os.path.join(self.root, rel))
            self.assertGreater(len(rows), 1, rel)
            self.assertEqual({len(r) for r in rows}, {len(rows[0])}, rel)
            for row in rows[1:]:
                for cell in row:
                    self.assertNotIn(cell, ("", "NaN", "nan", "NA"), rel)
        # reference: BIDS 1.9.0, "Modality agnostic files" > "Participants file": first column
        # participant_id holding sub-<label> (from memory)
        participants = read_tsv(os.path.join(self.root, "participants.tsv"))
        self.assertEqual(participants[0][0], "participant_id")
        subjects = sorted(r[0] for r in participants[1:])
        self.assertEqual(subjects, sorted(f"sub-{g}{i:02d}" for g in ("rested", "deprived") for i in (1, 2)))
        for s in subjects:
            self.assertTrue(os.path.isdir(os.path.join(self.deriv, s)), s)
        # reference: BIDS 1.9.0, "Derivatives" > "Imaging data types" > "Segmentations":
        # a discrete segmentation's lookup table has columns index and name (from memory)
        table = read_tsv(os.path.join(self.deriv, "space-sleeplab_desc-demoatlas_dseg.tsv"))
        self.assertEqual(table[0], ["index", "name"])
        self.assertEqual([int(r[0]) for r in table[1:]], list(range(1, 11)))

    def test_confounds_first_row(self):
        conf = [f for f in self.files if f.endswith("_desc-confounds_timeseries.tsv")]
        self.assertEqual(len(conf), 8)
        rows = read_tsv(os.path.join(self.root, conf[0]))
        header, first, second = rows[0], rows[1], rows[2]
        self.assertEqual(len(rows), 61)
        # reference: common practice of preprocessing pipelines: difference-based columns
        # (derivatives, framewise displacement) have no value in the first frame: n/a
        for name, cell, nxt in zip(header, first, second):
            if name.endswith("_derivative") or name == "framewise_displacement":
                self.assertEqual(cell, "n/a", name)
                float(nxt)
            else:
                float(cell)
        # reference: framewise displacement (Power et al. 2012, NeuroImage 59:2142): sum of
        # absolute backward differences of the 3 translations (mm) and the 3 rotations
        # (radians) as arcs on a 50 mm sphere
        values = np.array([[float(c) for c in r] for r in rows[2:]])
        col = {n: i for i, n in enumerate(header)}
        expected = (sum(abs(values[:, col[f"motion_{a}_derivative"]]) for a in "xyz")
                    + 50 * sum(abs(values[:, col[f"motion_{a}_derivative"]]) for a in ("pitch", "roll", "yaw")))
        np.testing.assert_allclose(values[:, col["framewise_displacement"]], expected, rtol=1e-5, atol=1e-6)

    # --- images, read by nibabel ------------------------------------------------------
    def test_images_read_by_nibabel(self):
        atlas = nib.load(os.path.join(self.deriv, "space-sleeplab_desc-demoatlas_dseg.nii.gz"))
        # reference: nibabel 5.0 Nifti1Image (Debian python3-nibabel): header fields
        self.assertIsInstance(atlas, nib.Nifti1Image)
        self.assertEqual(atlas.header["sizeof_hdr"], 348)
        self.assertEqual(atlas.header["magic"].tobytes(), b"n+1\x00")
        self.assertEqual(atlas.header.get_data_dtype(), np.int16)
        self.assertEqual(len(atlas.shape), 3)
        # 10 regions as cubes of 2 x 2 x 2 voxels in a 3 x 2 x 2 box of blocks, one
        # background voxel around it; 4 mm voxels, the grid centred on the origin
        self.assertEqual(atlas.shape, (3 * 2 + 2, 2 * 2 + 2, 2 * 2 + 2))
        expected_affine = np.diag([4.0, 4.0, 4.0, 1.0])
        expected_affine[:3, 3] = [-(n - 1) / 2 * 4 for n in atlas.shape]
        np.testing.assert_allclose(atlas.affine, expected_affine)
        np.testing.assert_allclose(atlas.get_qform(), expected_affine)
        np.testing.assert_allclose(atlas.get_sform(), expected_affine)
        self.assertEqual(int(atlas.header["qform_code"]), 2)
        self.assertEqual(int(atlas.header["sform_code"]), 2)
        labels = np.asarray(atlas.dataobj)
        self.assertEqual(sorted(np.unique(labels)), list(range(11)))
        for k in range(1, 11):
            self.assertEqual(int((labels == k).sum()), 8)

        plain_rows = read_tsv(os.path.join(self.plain, "manifest.tsv"))
        for rel in self.bold_files():
            img = nib.load(os.path.join(self.root, rel))
            h = img.header
            self.assertEqual(img.shape, atlas.shape + (60,))
            self.assertEqual(h.get_xyzt_units(), ("mm", "sec"))
            with open(os.path.join(self.root, rel.replace(".nii.gz", ".json"))) as f:
                sidecar = json.load(f)
            # reference: BIDS 1.9.0, "MRI" > "Task imaging data": RepetitionTime (seconds) and
            # TaskName REQUIRED; the validator checks it against the header's pixdim[4] (from memory)
            self.assertAlmostEqual(float(h.get_zooms()[3]), sidecar["RepetitionTime"], places=6)
            self.assertEqual(sidecar["RepetitionTime"], 0.8)
            self.assertEqual(sidecar["TaskName"], "rest")
            np.testing.assert_allclose(img.affine, atlas.affine)
            self.assertEqual(h.get_data_dtype(), np.int16)
            # The header as stored (nibabel's loaded image moves the scaling to its data proxy)
            with gzip.open(os.path.join(self.root, rel), "rb") as f:
                raw = nib.Nifti1Header.from_fileobj(f)
            self.assertEqual(float(raw["vox_offset"]), 352.0)
            self.assertEqual(raw["dim"][0], 4)
            slope, inter = raw.get_slope_inter()
            self.assertGreater(slope, 0)
            self.assertEqual((img.dataobj.slope, img.dataobj.inter), (slope, inter))
            data = img.get_fdata()
            # Outside the atlas the image is 0; inside, each region's mean is baseline + 10 x the
            # tsv layout's series of the same subject (session 01 only: later sessions redraw).
            np.testing.assert_allclose(data[labels == 0], 0.0, atol=slope)
            if "ses-01" not in rel:
                continue
            sub = rel.split(os.sep)[2][4:]
            tsv = os.path.join(self.plain, next(r[2] for r in plain_rows if r[0] == sub))
            series = np.loadtxt(tsv, skiprows=1)
            # reference: numpy means over the voxels of each label, from nibabel's scaled data
            means = np.stack([data[labels == k].mean(axis=0) for k in range(1, 11)], axis=1)
            offset = means - 10.0 * series
            # Each voxel is rounded to the int16 grid (at most slope / 2 off); the voxel noise sums to 0
            np.testing.assert_allclose(offset - offset.mean(axis=0), 0.0, atol=slope)
            self.assertTrue(np.all((offset.mean(axis=0) > 600) & (offset.mean(axis=0) < 1200)))

    def test_cohort_runs_the_manifest(self):
        # The manifest of image + atlas rows (one per session) runs in `critplex cohort` as it is.
        out = os.path.join(self.tmp.name, "results")
        config = os.path.join(self.tmp.name, "small.json")
        with open(os.path.join(self.root, "cohort_config.json")) as f:
            cfg = json.load(f)
        self.assertEqual(cfg["connect"]["clean"]["regressor_columns"], ["motion_*", "white_matter", "csf"])
        cfg["sweep"] = {"max_density": 0.4, "grid": 0.1}
        cfg["null"] = {"model": "none"}
        cfg["connect"]["filter"] = {"design": "butterworth", "order": 2, "low_hz": 0.05, "high_hz": 0.3}
        with open(config, "w") as f:
            json.dump(cfg, f)
        p = run("cohort", os.path.join(self.root, "manifest_ses-01.tsv"), "--config", config, "--out", out)
        self.assertIn("4 done", p.stdout)
        with open(os.path.join(out, "sub-rested01_topology.json")) as f:
            doc = json.load(f)
        self.assertEqual(doc["series"]["regions"], 10)
        self.assertAlmostEqual(doc["series"]["sampling_interval"], 0.8, places=6)
        matrix = read_tsv(os.path.join(out, "sub-rested01_connectivity.tsv"))
        self.assertEqual(matrix[0][1:3], ["mod1_reg01", "mod1_reg02"])  # names from the atlas table

    def test_refuses_a_folder_in_use(self):
        p = subprocess.run([CLI, "simulate", "--layout", "bids", "--out", self.root], capture_output=True, text=True)
        self.assertNotEqual(p.returncode, 0)
        self.assertIn("exists and is not an empty folder", p.stderr)


if __name__ == "__main__":
    unittest.main()
