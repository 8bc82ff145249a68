"""`critplex dataset`: from `critplex simulate --layout bids` (no hand-written manifest) through
the participant and group levels to the report.

Checks against outside sources:
- output names follow the BIDS specification's file name rules, written out here from the
  specification (Common principles, "Filenames" and "Entities"; the entity order of its
  schema, src/schema/rules/entities.yaml): <key>-<label> pairs joined by '_', labels and
  suffixes alphanumeric, the extension from the first '.', each key at most once and in
  the table's order;
- connectivity without cleaning or filtering equals numpy.corrcoef of regional means that
  nibabel + numpy compute from the same image and atlas (Debian python3-nibabel, python3-numpy);
- the tidy tables are read by pandas.read_csv(sep="\t") with no other option (Debian
  python3-pandas), n/a becoming NaN (pandas' default missing tokens include "n/a").
Invented data throughout (the demo study's model).
"""
import json
import os
import re
import shutil
import subprocess
import tempfile
import unittest

import numpy as np

CLI = os.environ["CRITPLEX_CLI"]

# BIDS specification, schema rules/entities.yaml: the order of entities in file names (keys).
# Written from the specification for this test (not imported from critplex).
SPEC_ENTITY_ORDER = ["sub", "tpl", "ses", "cohort", "sample", "task", "tracksys", "acq", "nuc", "voi", "ce", "trc",
                     "stain", "rec", "dir", "run", "mod", "echo", "flip", "inv", "mt", "part", "proc", "hemi", "space",
                     "split", "recording", "chunk", "atlas", "seg", "scale", "res", "den", "label", "prov", "desc"]
# BIDS "Filenames": label = alphanumeric value; suffix = alphanumeric; extension starts at the first '.'.
LABEL = re.compile(r"^[a-zA-Z0-9]+$")


def check_bids_name(test, name):
    """The specification's file name rules; returns (entities as list, suffix, extension)."""
    stem, dot, ext = name.partition(".")
    test.assertTrue(dot, f"{name}: no extension")
    parts = stem.split("_")
    suffix = parts[-1]
    test.assertRegex(suffix, LABEL, f"{name}: suffix must be alphanumeric")
    entities = []
    for part in parts[:-1]:
        key, dash, label = part.partition("-")
        test.assertTrue(dash, f"{name}: '{part}' is not key-label")
        test.assertIn(key, SPEC_ENTITY_ORDER, f"{name}: '{key}' is not a BIDS entity")
        test.assertRegex(label, LABEL, f"{name}: label '{label}' must be alphanumeric")
        entities.append((key, label))
    keys = [k for k, _ in entities]
    test.assertEqual(len(keys), len(set(keys)), f"{name}: an entity appears twice")
    test.assertEqual(keys, sorted(keys, key=SPEC_ENTITY_ORDER.index), f"{name}: entities out of the specification's order")
    test.assertEqual(keys[0], "sub", f"{name}: must start with sub-")
    return entities, suffix, "." + ext


def run(*args, ok=True):
    p = subprocess.run([CLI, *args], capture_output=True, text=True)
    if ok and p.returncode != 0:
        raise AssertionError(f"{args} failed ({p.returncode}):\n{p.stdout}\n{p.stderr}")
    return p


class Dataset(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        cls.tmp = tempfile.TemporaryDirectory()
        cls.root = cls.tmp.name
        cls.data = os.path.join(cls.root, "D")
        run("simulate", "--layout", "bids", "--out", cls.data, "--subjects", "3", "--regions", "16", "--frames", "150")
        cls.deriv = os.path.join(cls.data, "derivatives", "critplex-simulate")
        cls.atlas = os.path.join(cls.deriv, "space-sleeplab_desc-demoatlas_dseg.nii.gz")
        cls.labels = os.path.join(cls.deriv, "space-sleeplab_desc-demoatlas_dseg.tsv")
        cls.config = os.path.join(cls.root, "config.json")
        with open(os.path.join(cls.data, "cohort_config.json")) as f:
            config = json.load(f)
        config["null"]["count"] = 3
        with open(cls.config, "w") as f:
            json.dump(config, f)
        cls.out = os.path.join(cls.root, "OUT")
        cls.participant = run("dataset", cls.deriv, cls.out, "participant", "--atlas", cls.atlas, "--atlas-labels",
                              cls.labels, "--config", cls.config)
        cls.group = run("dataset", cls.deriv, cls.out, "group")

    @classmethod
    def tearDownClass(cls):
        cls.tmp.cleanup()

    def outputs(self):
        found = []
        for folder, _, files in os.walk(self.out):
            rel = os.path.relpath(folder, self.out)
            if rel.startswith("sub-"):
                found += [os.path.join(rel, f) for f in files]
        return sorted(found)

    def test_runs_and_names(self):
        self.assertIn("6 done, 0 skipped", self.participant.stdout)
        files = self.outputs()
        self.assertEqual(len(files), 6 * 7)  # per run: 3 TSVs + 3 sidecars + the topology document
        for rel in files:
            folder, name = os.path.split(rel)
            entities, suffix, ext = check_bids_name(self, name)
            e = dict(entities)
            # BIDS derivatives folders: sub-<label>/[ses-<label>/]<datatype>/
            self.assertEqual(folder, os.path.join("sub-" + e["sub"], "func"))
            self.assertEqual(e["task"], "rest")
            self.assertEqual(e["space"], "sleeplab")
            self.assertEqual(e["atlas"], "demoatlas")
            self.assertIn(suffix, {"connectivity", "curves", "transitions", "topology"})
            if suffix == "topology":
                self.assertEqual(ext, ".json")
                self.assertNotIn("desc", e)
            else:
                self.assertIn(ext, {".tsv", ".json"})
                self.assertEqual(e["desc"], "filtered")  # the demo config's one unnamed band-pass band
            self.assertNotEqual(e.get("desc"), "preproc", "the input's desc must not be carried over")

    def test_dataset_description(self):
        with open(os.path.join(self.out, "dataset_description.json")) as f:
            d = json.load(f)
        # BIDS "Derivatives": DatasetType derivative and GeneratedBy (REQUIRED for derivatives).
        self.assertEqual(d["DatasetType"], "derivative")
        self.assertTrue(d["BIDSVersion"])
        self.assertEqual(d["GeneratedBy"][0]["Name"], "critplex")
        self.assertTrue(d["GeneratedBy"][0]["Version"])
        self.assertEqual(d["GeneratedBy"][0]["Configuration"]["config"]["null"]["count"], 3)

    def test_every_tsv_has_a_sidecar_describing_its_columns(self):
        import pandas
        tsvs = [f for f in self.outputs() if f.endswith(".tsv")]
        tsvs += ["group/curves_long.tsv", "group/summaries.tsv"]
        for rel in tsvs:
            path = os.path.join(self.out, rel)
            with open(path[:-4] + ".json") as f:
                sidecar = json.load(f)
            table = pandas.read_csv(path, sep="\t")
            for column in table.columns:
                self.assertIn(column, sidecar, f"{rel}: column {column} not described")
                self.assertTrue(sidecar[column]["Description"])

    def test_tidy_tables_with_pandas(self):
        import pandas
        long = pandas.read_csv(os.path.join(self.out, "group", "curves_long.tsv"), sep="\t")
        self.assertEqual(list(long.columns), ["subject", "session", "task", "run", "group", "band", "density", "measure", "value"])
        self.assertTrue(long["session"].isna().all())  # n/a: the dataset has no sessions
        self.assertEqual(long["value"].dtype.kind, "f")
        self.assertEqual(long["density"].dtype.kind, "f")
        self.assertEqual(long["subject"].nunique(), 6)
        self.assertEqual(set(long["group"]), {"rested", "deprived"})
        # The long table holds exactly each run's curves table, melted.
        name = "sub-rested02_task-rest_space-sleeplab_atlas-demoatlas_desc-filtered_curves.tsv"
        wide = pandas.read_csv(os.path.join(self.out, "sub-rested02", "func", name), sep="\t")
        mine = long[long["subject"] == "rested02"]
        melted = wide.melt(id_vars="density", var_name="measure", value_name="value")
        self.assertEqual(len(mine), len(melted))
        np.testing.assert_array_equal(mine["value"].to_numpy(), melted.sort_index(kind="stable")
                                      .set_index(["density", "measure"]).loc[list(zip(mine["density"], mine["measure"]))]
                                      ["value"].to_numpy())
        summaries = pandas.read_csv(os.path.join(self.out, "group", "summaries.tsv"), sep="\t")
        self.assertEqual(len(summaries), 6)  # one row per subject and run
        for column in summaries.columns:
            self.assertRegex(column, r"^[a-z0-9_]+$", "machine names: no spaces")
        self.assertEqual(summaries["first_chi_zero"].dtype.kind, "f")

    def test_group_comparison_and_report(self):
        self.assertTrue(os.path.exists(os.path.join(self.out, "group", "group_comparison.json")), self.group.stderr)
        self.assertTrue(os.path.exists(os.path.join(self.out, "group", "group_tests.tsv")))
        run("report", os.path.join(self.out, "group"))
        self.assertTrue(os.path.exists(os.path.join(self.out, "group", "report.html")))

    def test_rerun_skips_unchanged(self):
        p = run("dataset", self.deriv, self.out, "participant", "--atlas", self.atlas, "--atlas-labels", self.labels,
                "--config", self.config, "--participant-label", "sub-rested01")
        self.assertIn("0 done, 1 skipped", p.stdout)


class Connectivity(unittest.TestCase):
    """Without cleaning or filtering, the dataset mode's matrix is Pearson's r of the regional
    means. reference: nibabel (image and atlas reading) + numpy (means, numpy.corrcoef)."""

    def test_matches_nibabel_numpy(self):
        import nibabel
        with tempfile.TemporaryDirectory() as root:
            data = os.path.join(root, "D")
            run("simulate", "--layout", "bids", "--out", data, "--subjects", "1", "--regions", "12", "--frames", "100")
            deriv = os.path.join(data, "derivatives", "critplex-simulate")
            atlas = os.path.join(deriv, "space-sleeplab_desc-demoatlas_dseg.nii.gz")
            config = os.path.join(root, "c.json")
            with open(config, "w") as f:
                json.dump({"connect": {"method": "pearson"}, "sweep": {"max_density": 0.2, "grid": 0.05}}, f)
            out = os.path.join(root, "OUT")
            run("dataset", deriv, out, "participant", "--atlas", atlas, "--config", config, "--participant-label", "rested01")
            func = os.path.join(deriv, "sub-rested01", "func")
            img = nibabel.load(os.path.join(func, "sub-rested01_task-rest_space-sleeplab_desc-preproc_bold.nii.gz"))
            values = np.asarray(img.get_fdata(), dtype=float)
            labels = np.asarray(nibabel.load(atlas).get_fdata()).astype(int)
            ids = sorted(set(labels.ravel()) - {0})
            means = np.stack([values[labels == k].mean(axis=0) for k in ids], axis=1)
            expected = np.corrcoef(means, rowvar=False)
            name = "sub-rested01_task-rest_space-sleeplab_atlas-demoatlas_desc-unfiltered_connectivity.tsv"
            with open(os.path.join(out, "sub-rested01", "func", name)) as f:
                rows = [line.rstrip("\n").split("\t") for line in f]
            got = np.array([[float(x) for x in row[1:]] for row in rows[1:]])
            np.testing.assert_allclose(got, expected, atol=1e-10)


class Inputs(unittest.TestCase):
    """Sidecars, confounds, sessions, filters and refusals on a small simulated dataset."""

    def setUp(self):
        self.tmp = tempfile.TemporaryDirectory()
        self.root = self.tmp.name
        self.data = os.path.join(self.root, "D")
        run("simulate", "--layout", "bids", "--out", self.data, "--subjects", "2", "--regions", "10", "--frames", "80",
            "--sessions", "2")
        self.deriv = os.path.join(self.data, "derivatives", "critplex-simulate")
        self.atlas = os.path.join(self.deriv, "space-sleeplab_desc-demoatlas_dseg.nii.gz")
        self.config = os.path.join(self.root, "c.json")
        with open(self.config, "w") as f:
            json.dump({"connect": {"method": "pearson", "clean": {"regressor_columns": ["motion_*", "csf"]}},
                       "sweep": {"max_density": 0.3, "grid": 0.05}}, f)
        self.out = os.path.join(self.root, "OUT")
        self.func = os.path.join(self.deriv, "sub-rested01", "ses-02", "func")
        self.stem = os.path.join(self.func, "sub-rested01_ses-02_task-rest")

    def tearDown(self):
        self.tmp.cleanup()

    def dataset(self, *extra, ok=True):
        return run("dataset", self.deriv, self.out, "participant", "--atlas", self.atlas, "--config", self.config,
                   *extra, ok=ok)

    def test_sessions_and_filters(self):
        p = self.dataset("--participant-label", "rested01", "deprived02", "--session", "02", "--task", "rest")
        self.assertIn("2 done", p.stdout)
        names = sorted(os.listdir(os.path.join(self.out, "sub-rested01", "ses-02", "func")))
        self.assertIn("sub-rested01_ses-02_task-rest_space-sleeplab_atlas-demoatlas_topology.json", names)
        for name in names:
            self.assertEqual(check_bids_name(self, name)[0][1], ("ses", "02"))
        self.assertFalse(os.path.exists(os.path.join(self.out, "sub-rested01", "ses-01")))
        self.assertFalse(os.path.exists(os.path.join(self.out, "sub-rested02")))
        g = run("dataset", self.deriv, self.out, "group")
        import pandas
        s = pandas.read_csv(os.path.join(self.out, "group", "summaries.tsv"), sep="\t", dtype={"session": str})
        self.assertEqual(list(s["session"]), ["02", "02"])
        # A filter that matches nothing is an error naming the filter.
        p = self.dataset("--task", "nback", ok=False)
        self.assertNotEqual(p.returncode, 0)
        self.assertIn("task nback", p.stderr)

    def test_sessions_in_the_group_comparison(self):
        self.dataset()
        g = run("dataset", self.deriv, self.out, "group")
        self.assertIn("has 2 runs", g.stderr)  # one run per participant, or the comparison would count them twice
        self.assertFalse(os.path.exists(os.path.join(self.out, "group", "group_comparison.json")))
        import pandas
        long = pandas.read_csv(os.path.join(self.out, "group", "curves_long.tsv"), sep="\t", dtype={"session": str})
        self.assertEqual(sorted(set(long["session"])), ["01", "02"])
        run("dataset", self.deriv, self.out, "group", "--compare-session", "01")
        with open(os.path.join(self.out, "group", "group_comparison.json")) as f:
            groups = json.load(f)["groups"]
        self.assertEqual(sorted(len(g["subjects"]) for g in groups), [2, 2])
        # A later group run without a comparison removes the earlier one (it would not match).
        run("dataset", self.deriv, self.out, "group")
        self.assertFalse(os.path.exists(os.path.join(self.out, "group", "group_comparison.json")))

    def test_dry_run_writes_nothing(self):
        p = self.dataset("--dry-run")
        self.assertIn("8 runs would run", p.stdout)
        self.assertIn("desc-confounds_timeseries.tsv", p.stdout)
        self.assertFalse(os.path.exists(self.out))

    def test_sidecar_wins_over_header_with_a_warning(self):
        with open(self.stem + "_space-sleeplab_desc-preproc_bold.json") as f:
            sidecar = json.load(f)
        sidecar["RepetitionTime"] = 2.0  # the header says 0.8
        with open(self.stem + "_space-sleeplab_desc-preproc_bold.json", "w") as f:
            json.dump(sidecar, f)
        p = self.dataset("--participant-label", "rested01", "--session", "02")
        self.assertIn("0.8", p.stderr)
        self.assertIn("2 s", p.stderr)
        self.assertIn("sub-rested01_ses-02_task-rest_space-sleeplab_desc-preproc_bold.json", p.stderr)
        with open(os.path.join(self.out, "sub-rested01", "ses-02", "func",
                               "sub-rested01_ses-02_task-rest_space-sleeplab_atlas-demoatlas_topology.json")) as f:
            self.assertEqual(json.load(f)["series"]["sampling_interval"], 2.0)

    def refused(self, *needles):
        p = self.dataset(ok=False)
        self.assertNotEqual(p.returncode, 0)
        for needle in needles:
            self.assertIn(needle, p.stderr)
        self.assertFalse(os.path.exists(self.out), "bad input must leave no output")

    def test_output_into_the_derivatives_folder_refused(self):
        p = run("dataset", self.deriv, self.deriv, "participant", "--atlas", self.atlas, ok=False)
        self.assertNotEqual(p.returncode, 0)
        self.assertIn("is the derivatives folder", p.stderr)

    def test_missing_sidecar(self):
        os.remove(self.stem + "_space-sleeplab_desc-preproc_bold.json")
        self.refused("sub-rested01_ses-02_task-rest_space-sleeplab_desc-preproc_bold.json", "missing")

    def test_inherited_sidecars(self):
        # BIDS "The Inheritance Principle": sidecars higher in the tree apply when their
        # entities are a subset of the file's and the suffix matches; a lower level (or the
        # file's own sidecar) overrides a higher one.
        with open(os.path.join(self.deriv, "task-rest_bold.json"), "w") as f:
            json.dump({"RepetitionTime": 2.0}, f)
        os.remove(self.stem + "_space-sleeplab_desc-preproc_bold.json")
        p = self.dataset("--participant-label", "rested01", "--dry-run")
        lines = [line for line in p.stdout.splitlines() if "TR " in line]
        self.assertIn("TR 2 s from " + os.path.join(self.deriv, "task-rest_bold.json"), lines[1])  # ses-02: inherited
        self.assertIn("TR 0.8 s from " + os.path.join(self.deriv, "sub-rested01", "ses-01", "func"), lines[0])  # its own
        ses = os.path.join(self.deriv, "sub-rested01", "ses-02", "sub-rested01_ses-02_task-rest_bold.json")
        with open(ses, "w") as f:
            json.dump({"RepetitionTime": 1.5}, f)
        p = self.dataset("--participant-label", "rested01", "--dry-run")
        self.assertIn("TR 1.5 s from " + ses, p.stdout)
        self.assertIn("1.5 s; using the sidecar's", p.stderr)  # the header says 0.8

    def test_sidecar_without_repetition_time(self):
        with open(self.stem + "_space-sleeplab_desc-preproc_bold.json", "w") as f:
            json.dump({"TaskName": "rest"}, f)
        self.refused("sub-rested01_ses-02_task-rest_space-sleeplab_desc-preproc_bold.json", "RepetitionTime")

    def test_missing_confounds(self):
        os.remove(self.stem + "_desc-confounds_timeseries.tsv")
        self.refused("sub-rested01_ses-02_task-rest_desc-confounds_timeseries.tsv", "missing")

    def test_atlas_on_another_grid(self):
        # The atlas of a study with other regions: another grid, refused before any work
        # with a message naming both files.
        other = os.path.join(self.root, "O")
        run("simulate", "--layout", "bids", "--out", other, "--subjects", "1", "--regions", "30", "--frames", "20")
        self.atlas = os.path.join(other, "derivatives", "critplex-simulate", "space-sleeplab_desc-demoatlas_dseg.nii.gz")
        self.refused("grids differ", self.atlas, "sub-deprived01_ses-01_task-rest_space-sleeplab_desc-preproc_bold.nii.gz")

    def test_atlas_with_another_affine_fails_the_runs(self):
        # Same voxel counts, other voxel size: found when each run is read; the runs fail
        # by name, the others' files are not written, the exit status is 1.
        import nibabel
        img = nibabel.load(self.atlas)
        moved = nibabel.Nifti1Image(np.asarray(img.dataobj), img.affine * np.diag([2, 2, 2, 1]), img.header)
        moved.header.set_zooms(tuple(2 * z for z in img.header.get_zooms()[:3]))
        self.atlas = os.path.join(self.root, "moved_dseg.nii.gz")
        moved.to_filename(self.atlas)
        p = self.dataset("--participant-label", "rested01", ok=False)
        self.assertEqual(p.returncode, 1)
        self.assertIn("0 done", p.stdout)
        self.assertIn("grids differ", p.stderr)
        self.assertIn("moved_dseg.nii.gz", p.stderr)
        self.assertFalse(os.path.exists(os.path.join(self.out, "sub-rested01")))


class Cifti(unittest.TestCase):
    """CIFTI-2 runs written by nibabel (Debian python3-nibabel) in a derivatives layout: a
    parcellated series read as regions with their names, and a dense series with a dense
    label atlas. reference: nibabel's data and axes, numpy means and numpy.corrcoef."""

    @classmethod
    def setUpClass(cls):
        import nibabel
        from nibabel import cifti2
        cls.tmp = tempfile.TemporaryDirectory()
        # Parcellated and dense runs in two derivatives folders (a dense run needs an atlas).
        cls.pt_deriv = os.path.join(cls.tmp.name, "deriv-pt")
        cls.dt_deriv = os.path.join(cls.tmp.name, "deriv-dt")
        rng = np.random.default_rng(17)  # invented values
        frames = 120
        series = cifti2.SeriesAxis(start=0.0, step=0.72, size=frames, unit="second")
        left = np.zeros(30, bool)
        left[::2] = True
        cls.brain = cifti2.BrainModelAxis.from_mask(left, name="CortexLeft")
        cls.names = ["L frontal", "L parietal & more", "L occipital \u00e9t\u00e9"]
        parcels = cifti2.ParcelsAxis.from_brain_models([(n, cls.brain[3 * i:3 * i + 5]) for i, n in enumerate(cls.names)])
        shared = rng.standard_normal((frames, 1))
        for sub in ("01", "02"):
            name = f"sub-{sub}_task-rest_space-fsLR_den-91k"
            pt_func, dt_func = (os.path.join(d, f"sub-{sub}", "func") for d in (cls.pt_deriv, cls.dt_deriv))
            os.makedirs(pt_func)
            os.makedirs(dt_func)
            pt = (rng.standard_normal((frames, 3)) + shared * [1.0, 0.5, 0.2] + 40).astype(np.float32)
            cifti2.Cifti2Image(pt, header=(series, parcels)).to_filename(os.path.join(pt_func, name + "_bold.ptseries.nii"))
            dt = (rng.standard_normal((frames, len(cls.brain))) + shared + 90).astype(np.float32)
            cifti2.Cifti2Image(dt, header=(series, cls.brain)).to_filename(
                os.path.join(dt_func, name + "_desc-preproc_bold.dtseries.nii"))
            # one sidecar as BIDS names it, one as some pipelines do (.ptseries.json)
            with open(os.path.join(pt_func, name + ("_bold.json" if sub == "01" else "_bold.ptseries.json")), "w") as f:
                json.dump({"RepetitionTime": 0.72}, f)
            with open(os.path.join(dt_func, name + "_desc-preproc_bold.json"), "w") as f:
                json.dump({"RepetitionTime": 0.72}, f)
        cls.keys = rng.choice([0, 4, 9], size=len(cls.brain), p=[0.2, 0.4, 0.4]).astype(np.float32)
        table = {0: ("???", (0, 0, 0, 0)), 4: ("frontal", (1, 0, 0, 1)), 9: ("occipital", (0, 0, 1, 1))}
        cls.dlabel = os.path.join(cls.tmp.name, "atlas.dlabel.nii")
        cifti2.Cifti2Image(cls.keys[None, :], header=(cifti2.LabelAxis(["parcellation"], table), cls.brain)).to_filename(cls.dlabel)
        cls.nib = nibabel

    @classmethod
    def tearDownClass(cls):
        cls.tmp.cleanup()

    def connectivity(self, out, sub, name):
        with open(os.path.join(out, f"sub-{sub}", "func", name)) as f:
            rows = [line.rstrip("\n").split("\t") for line in f]
        return rows[0][1:], np.array([[float(x) for x in row[1:]] for row in rows[1:]])

    def test_parcellated_series_keeps_region_names(self):
        out = os.path.join(self.tmp.name, "OUT-pt")
        config = os.path.join(self.tmp.name, "pt.json")
        with open(config, "w") as f:
            json.dump({"connect": {"method": "pearson"}, "sweep": {"max_density": 0.7, "grid": 0.34}}, f)
        p = run("dataset", self.pt_deriv, out, "participant", "--atlas-label", "demoparcels", "--config", config)
        self.assertIn("2 done", p.stdout)
        self.assertEqual(p.stderr, "")  # header and sidecars agree on 0.72 s
        for sub in ("01", "02"):
            names, got = self.connectivity(out, sub, f"sub-{sub}_task-rest_space-fsLR_atlas-demoparcels_den-91k_"
                                                     "desc-unfiltered_connectivity.tsv")  # atlas before den (entity order)
            img = self.nib.load(os.path.join(self.pt_deriv, f"sub-{sub}", "func",
                                             f"sub-{sub}_task-rest_space-fsLR_den-91k_bold.ptseries.nii"))
            self.assertEqual(names, [str(x) for x in img.header.get_axis(1).name])  # reference: ParcelsAxis.name
            self.assertEqual(names, self.names)
            np.testing.assert_allclose(got, np.corrcoef(np.asarray(img.get_fdata()), rowvar=False), atol=1e-10)

    def test_dense_series_with_dense_label_atlas(self):
        out = os.path.join(self.tmp.name, "OUT-dt")
        config = os.path.join(self.tmp.name, "dt.json")
        with open(config, "w") as f:
            json.dump({"connect": {"method": "pearson"}, "sweep": {"max_density": 1.0, "grid": 1.0}}, f)
        p = run("dataset", self.dt_deriv, out, "participant", "--atlas", self.dlabel, "--config", config)
        self.assertIn("2 done", p.stdout)
        # A dense run without an atlas is refused before anything is written, naming the run.
        p = run("dataset", self.dt_deriv, out + "2", "participant", "--config", config, ok=False)
        self.assertIn("sub-01_task-rest_space-fsLR_den-91k_desc-preproc_bold.dtseries.nii", p.stderr)
        self.assertFalse(os.path.exists(out + "2"))
        img = self.nib.load(os.path.join(self.dt_deriv, "sub-02", "func",
                                         "sub-02_task-rest_space-fsLR_den-91k_desc-preproc_bold.dtseries.nii"))
        data = np.asarray(img.get_fdata())
        means = np.stack([data[:, self.keys == k].mean(axis=1) for k in (4, 9)], axis=1)
        names, got = self.connectivity(out, "02", "sub-02_task-rest_space-fsLR_atlas-atlas_den-91k_desc-unfiltered_"
                                                  "connectivity.tsv")
        self.assertEqual(names, ["frontal", "occipital"])  # the dlabel table's names
        np.testing.assert_allclose(got, np.corrcoef(means, rowvar=False), atol=1e-10)


class PythonBinding(unittest.TestCase):
    """critplex.run_dataset (plugins/python) over cpx_dataset_run."""

    def test_dry_run_and_refusal(self):
        import critplex
        with tempfile.TemporaryDirectory() as root:
            data = os.path.join(root, "D")
            critplex.simulate_study(data, layout="bids", regions=8, frames=40)
            deriv = os.path.join(data, "derivatives", "critplex-simulate")
            atlas = os.path.join(deriv, "space-sleeplab_desc-demoatlas_dseg.nii.gz")
            s = critplex.run_dataset(deriv, os.path.join(root, "OUT"), "participant", atlas=atlas, dry_run=True,
                                     participant_label=["rested01", "deprived02"],
                                     config={"connect": {"method": "pearson"}})
            self.assertEqual([r["subject"] for r in s["runs"]], ["deprived02", "rested01"])
            self.assertEqual(s["runs"][0]["repetition_time"], 0.8)
            self.assertFalse(os.path.exists(os.path.join(root, "OUT")))
            with self.assertRaises(critplex.CritplexError) as e:
                critplex.run_dataset(deriv, os.path.join(root, "OUT"), "everything")
            self.assertIn("participant", str(e.exception))


if __name__ == "__main__":
    unittest.main()
