#!/usr/bin/python3
"""The Snakemake workflow (plugins/snakemake/Snakefile) run by Snakemake itself (Debian
snakemake) on small invented studies, one of time series tables and one of images with an
atlas and confounds (`critplex simulate --layout bids`): one job per subject, then compare
and report. Its subject files and group tests must equal what `critplex cohort` +
`critplex compare` give on the same manifest and config (the workflow only splits the same
work into jobs), and each job leaves its log. The same workflow on SLURM: tests/cluster.

    test_snakemake.py WORK_DIR      (critplex on PATH: the installed command)
"""
import csv
import json
import os
import shutil
import subprocess
import sys
import unittest

WORK = os.path.abspath(sys.argv.pop(1))
SNAKEFILE = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "plugins", "snakemake", "Snakefile")


def read(path):
    with open(path) as f:
        return f.read()


def light_analysis(path):
    """The study's config, lighter than the demo's so the test stays quick."""
    with open(path) as f:
        cfg = json.load(f)
    cfg["sweep"] = {"max_density": 0.3, "grid": 0.02, "curvature": {}}
    cfg["null"] = {"model": "rewire", "count": 3, "seed": 5}
    with open(path, "w") as f:
        json.dump(cfg, f)


class SnakemakeWorkflow(unittest.TestCase):
    def run_both(self, name, simulate_args):
        """The workflow and a cohort run on the same simulated study; returns (flow, cohort, subjects)."""
        work = os.path.join(WORK, name)
        shutil.rmtree(work, ignore_errors=True)
        os.makedirs(work)
        study = os.path.join(work, "study")
        subprocess.run(["critplex", "simulate", "--out", study, *simulate_args], check=True, capture_output=True)
        analysis = os.path.join(study, "cohort_config.json")
        light_analysis(analysis)
        manifest = os.path.join(study, "manifest.tsv")
        flow = os.path.join(work, "flow")
        run = subprocess.run(["snakemake", "-s", SNAKEFILE, "--cores", "2", "--directory", work, "--config",
                              f"manifest={manifest}", f"analysis={analysis}", f"out={flow}",
                              f"critplex={shutil.which('critplex')}"], capture_output=True, text=True)
        self.assertEqual(run.returncode, 0, run.stderr[-3000:])
        self.assertTrue(os.path.isfile(os.path.join(flow, "report.html")))

        cohort = os.path.join(work, "cohort")
        subprocess.run(["critplex", "cohort", manifest, "--config", analysis, "--out", cohort], check=True, capture_output=True)
        subprocess.run(["critplex", "compare", cohort], check=True, capture_output=True)
        with open(manifest) as f:
            subjects = [row["subject"] for row in csv.DictReader(f, delimiter="\t")]
        for sid in subjects:
            for kind in ("curves", "transitions", "connectivity"):
                self.assertEqual(read(os.path.join(flow, f"sub-{sid}_{kind}.tsv")),
                                 read(os.path.join(cohort, f"sub-{sid}_{kind}.tsv")), f"{sid} {kind}")
            self.assertTrue(os.path.isfile(os.path.join(flow, "logs", f"sub-{sid}.log")), sid)
        self.assertEqual(read(os.path.join(flow, "group_tests.tsv")), read(os.path.join(cohort, "group_tests.tsv")))
        for step in ("compare", "report"):
            self.assertTrue(os.path.isfile(os.path.join(flow, "logs", f"{step}.log")), step)
        # What a scheduler is told per subject job (a dry run lists every job's resources).
        dry = subprocess.run(["snakemake", "-s", SNAKEFILE, "-n", "--forceall", "--cores", "2", "--directory", work,
                              "--config", f"manifest={manifest}", f"analysis={analysis}", f"out={flow}", "threads=2"],
                             capture_output=True, text=True)
        self.assertEqual(dry.returncode, 0, dry.stderr[-3000:])
        subject_jobs = dry.stdout.split("rule subject:")[1:]
        self.assertEqual(len(subject_jobs), len(subjects))
        for job in subject_jobs:
            block = job.split("\n\n")[0]
            self.assertIn("threads: 2", block)
            self.assertIn("mem_mb=200", block)  # small studies get the 200 MiB floor
            self.assertIn("runtime=60", block)
        return flow, cohort, subjects

    def test_timeseries_manifest_equals_cohort(self):
        _, _, subjects = self.run_both("tables", ["--subjects", "3", "--regions", "24", "--frames", "200", "--seed", "12"])
        self.assertEqual(len(subjects), 6)

    def test_image_manifest_equals_cohort(self):
        # Manifest rows of image, labels, label_names and confounds (the KeyError 'timeseries' case).
        flow, _, subjects = self.run_both("images", ["--layout", "bids", "--subjects", "2", "--regions", "16",
                                                     "--frames", "150", "--seed", "13"])
        self.assertEqual(len(subjects), 4)
        with open(os.path.join(flow, "configs", f"sub-{subjects[0]}.json")) as f:
            cfg = json.load(f)
        self.assertTrue(cfg["image"].endswith("_desc-preproc_bold.nii.gz"))
        self.assertTrue(cfg["confounds"].endswith("_desc-confounds_timeseries.tsv"))
        self.assertEqual(cfg["sweep"]["cliques"]["threads"], 1)
        with open(os.path.join(flow, f"sub-{subjects[0]}_connectivity.tsv")) as f:
            self.assertTrue(f.readline().startswith("name\tmod1_reg01\t"))  # region names from the atlas table


if __name__ == "__main__":
    unittest.main()
