#!/usr/bin/python3
"""The Nipype interfaces (plugins/nipype) inside a real Nipype workflow (Debian
python3-nipype): a subject node and a compare node, run by Nipype's own engine on a
small invented study, must give the same curves as `critplex subject` run directly
with the same config, and the group comparison `critplex compare` writes.

    test_nipype.py WORK_DIR      (critplex on PATH: the installed command)
"""
import csv
import json
import os
import shutil
import subprocess
import sys
import unittest

WORK = os.path.abspath(sys.argv.pop(1))
sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "plugins", "nipype"))

import nipype.pipeline.engine as pe  # noqa: E402
from critplex_nipype import CritplexCompare, CritplexSubject  # noqa: E402


def curves(path):
    with open(path) as f:
        return list(csv.reader(f, delimiter="\t"))


class NipypeWorkflow(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        shutil.rmtree(WORK, ignore_errors=True)
        os.makedirs(WORK)
        cls.study = os.path.join(WORK, "study")
        subprocess.run(["critplex", "simulate", "--out", cls.study, "--subjects", "2", "--regions", "24",
                        "--frames", "200", "--seed", "11"], check=True, capture_output=True)
        with open(os.path.join(cls.study, "manifest.tsv")) as f:
            cls.rows = list(csv.DictReader(f, delimiter="\t"))
        cls.sweep = {"max_density": 0.3, "grid": 0.02, "curvature": {}}
        cls.connect = {"method": "ledoit_wolf", "sampling_interval": 0.8}

    def test_subject_nodes_then_compare(self):
        results = os.path.join(WORK, "results")
        os.makedirs(results)
        shutil.copy(os.path.join(self.study, "manifest.tsv"), results)
        wf = pe.Workflow(name="topology", base_dir=os.path.join(WORK, "nipype"))
        for row in self.rows:
            node = pe.Node(CritplexSubject(subject_id=row["subject"], group=row["group"],
                                           timeseries=os.path.join(self.study, row["timeseries"]),
                                           connect=self.connect, sweep=self.sweep, out_dir=results),
                           name="subject_" + row["subject"])
            wf.add_nodes([node])
        wf.run()  # Nipype's linear engine, as a preprocessing script would call it
        for row in self.rows:
            sid = row["subject"]
            ours = curves(os.path.join(results, f"sub-{sid}_curves.tsv"))
            # Same subject through the command directly: identical curves (deterministic).
            direct = os.path.join(WORK, "direct-" + sid)
            os.makedirs(direct)
            cfg = os.path.join(direct, "config.json")
            with open(cfg, "w") as f:
                json.dump({"id": sid, "group": row["group"], "timeseries": os.path.join(self.study, row["timeseries"]),
                           "connect": self.connect, "sweep": self.sweep}, f)
            subprocess.run(["critplex", "subject", cfg, "--out", direct], check=True, capture_output=True)
            self.assertEqual(ours, curves(os.path.join(direct, f"sub-{sid}_curves.tsv")))
            self.assertIn("chi", ours[0])
            self.assertIn("kappa_mean", ours[0])
            with open(os.path.join(results, f"sub-{sid}_topology.json")) as f:
                doc = json.load(f)
            self.assertEqual((doc["subject"], doc["group"]), (sid, row["group"]))

        compare = CritplexCompare(results_dir=results)
        outputs = compare.run().outputs
        self.assertTrue(os.path.isfile(outputs.comparison))
        self.assertTrue(os.path.isfile(outputs.tests))
        with open(outputs.comparison) as f:
            doc = json.load(f)
        self.assertEqual(sorted(g["name"] for g in doc["groups"]), sorted({r["group"] for r in self.rows}))
        for g in doc["groups"]:
            self.assertEqual(sorted(g["subjects"]), sorted(r["subject"] for r in self.rows if r["group"] == g["name"]))

    def test_subject_node_on_an_image_and_atlas(self):
        # A run of `critplex simulate --layout bids`: image, atlas, its label table, confounds.
        study = os.path.join(WORK, "bids")
        subprocess.run(["critplex", "simulate", "--layout", "bids", "--out", study, "--subjects", "1", "--regions", "12",
                        "--frames", "150", "--seed", "11"], check=True, capture_output=True)
        with open(os.path.join(study, "manifest.tsv")) as f:
            row = next(csv.DictReader(f, delimiter="\t"))
        inputs = {k: os.path.join(study, row[k]) for k in ("image", "labels", "label_names", "confounds")}
        connect = {"method": "pearson", "clean": {"regressor_columns": ["motion_*"]}}
        results = os.path.join(WORK, "bids-results")
        os.makedirs(results)
        node = pe.Node(CritplexSubject(subject_id=row["subject"], group=row["group"], connect=connect, sweep=self.sweep,
                                       out_dir=results, **inputs), name="subject_image", base_dir=os.path.join(WORK, "nipype-bids"))
        node.run()
        direct = os.path.join(WORK, "bids-direct")
        os.makedirs(direct)
        cfg = os.path.join(direct, "config.json")
        with open(cfg, "w") as f:
            json.dump({"id": row["subject"], "group": row["group"], "connect": connect, "sweep": self.sweep, **inputs}, f)
        subprocess.run(["critplex", "subject", cfg, "--out", direct], check=True, capture_output=True)
        name = f"sub-{row['subject']}_connectivity.tsv"
        self.assertEqual(curves(os.path.join(results, name)), curves(os.path.join(direct, name)))
        self.assertEqual(curves(os.path.join(results, name))[0][1], "mod1_reg01")


if __name__ == "__main__":
    unittest.main()
