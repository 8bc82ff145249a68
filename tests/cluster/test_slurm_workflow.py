#!/usr/bin/python3
"""The Snakemake workflow (plugins/snakemake/Snakefile) submitted to a real one-node SLURM
(Debian slurm-wlm, started by tests/cluster/slurm.sh; SLURM_CONF set) through Snakemake
7's own SLURM executor, on a small invented BIDS-layout study (`critplex simulate --layout
bids`, images + atlas + confounds). Checks that the subject jobs ran as SLURM jobs, at least
two at once, and that every result equals `critplex cohort` + `critplex compare` run
locally on the same manifest and config; and the same for the dataset workflow
(plugins/snakemake/dataset.smk) against `critplex dataset` run locally.

    test_slurm_workflow.py WORK_DIR      (critplex on PATH; SLURM_CONF and USER set)
"""
import csv
import glob
import json
import os
import shutil
import subprocess
import sys
import threading
import time
import unittest

WORK = os.path.abspath(sys.argv.pop(1))
SNAKEFILE = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "plugins", "snakemake", "Snakefile")


def read(path):
    with open(path) as f:
        return f.read()


class QueueWatcher(threading.Thread):
    """Polls squeue and keeps the largest set of jobs seen running at the same time."""

    def __init__(self):
        super().__init__(daemon=True)
        self.stop = threading.Event()
        self.most = set()
        self.seen = set()

    def run(self):
        while not self.stop.is_set():
            p = subprocess.run(["squeue", "-h", "-t", "RUNNING", "-o", "%i %j"], capture_output=True, text=True)
            running = {tuple(line.split(" ", 1)) for line in p.stdout.splitlines() if line.strip()}
            self.seen |= running
            if len(running) > len(self.most):
                self.most = running
            self.stop.wait(0.5)


class SlurmWorkflow(unittest.TestCase):
    def test_slurm_equals_local(self):
        study = os.path.join(WORK, "study")
        subprocess.run(["critplex", "simulate", "--layout", "bids", "--out", study, "--subjects", "2", "--regions", "24",
                        "--frames", "200", "--seed", "21"], check=True, capture_output=True)
        manifest = os.path.join(study, "manifest.tsv")
        # The demo analysis, lighter so the test stays quick (confound regression kept).
        with open(os.path.join(study, "cohort_config.json")) as f:
            cfg = json.load(f)
        cfg["sweep"] = {"max_density": 0.3, "grid": 0.02, "curvature": {}}
        cfg["null"] = {"model": "rewire", "count": 3, "seed": 5}
        analysis = os.path.join(WORK, "analysis.json")
        with open(analysis, "w") as f:
            json.dump(cfg, f)

        flow = os.path.join(WORK, "slurm-results")
        watcher = QueueWatcher()
        watcher.start()
        t0 = time.monotonic()
        run = subprocess.run(["snakemake", "-s", SNAKEFILE, "--slurm", "--jobs", "4",
                              "--max-status-checks-per-second", "1", "--directory", WORK,
                              "--config", f"manifest={manifest}", f"analysis={analysis}", f"out={flow}",
                              f"critplex={shutil.which('critplex')}"], capture_output=True, text=True)
        slurm_seconds = time.monotonic() - t0
        watcher.stop.set()
        watcher.join()
        self.assertEqual(run.returncode, 0, run.stderr[-4000:])

        t0 = time.monotonic()
        local = os.path.join(WORK, "local-results")
        subprocess.run(["critplex", "cohort", manifest, "--config", analysis, "--out", local], check=True, capture_output=True)
        subprocess.run(["critplex", "compare", local], check=True, capture_output=True)
        local_seconds = time.monotonic() - t0
        print(f"SLURM workflow {slurm_seconds:.1f} s, local cohort + compare {local_seconds:.1f} s; "
              f"most jobs running at once: {len(watcher.most)} {sorted(watcher.most)}", file=sys.stderr)

        with open(manifest) as f:
            subjects = [row["subject"] for row in csv.DictReader(f, delimiter="\t")]
        self.assertEqual(len(subjects), 4)
        # Every subject ran as a SLURM job (Snakemake keeps one SLURM log per job), at least
        # two of them at the same time on the two cores.
        slurm_logs = glob.glob(os.path.join(WORK, ".snakemake", "slurm_logs", "rule_subject", "*.log"))
        self.assertEqual(len(slurm_logs), 4, slurm_logs)
        self.assertGreaterEqual(len(watcher.most), 2, f"jobs seen running: {sorted(watcher.seen)}")
        for sid in subjects:
            self.assertTrue(os.path.isfile(os.path.join(flow, "logs", f"sub-{sid}.log")), sid)
            for kind in ("curves", "transitions", "connectivity"):
                name = f"sub-{sid}_{kind}.tsv"
                self.assertEqual(read(os.path.join(flow, name)), read(os.path.join(local, name)), name)
        self.assertEqual(read(os.path.join(flow, "group_tests.tsv")), read(os.path.join(local, "group_tests.tsv")))
        self.assertTrue(os.path.isfile(os.path.join(flow, "report.html")))

    def test_dataset_workflow_slurm_equals_local(self):
        """plugins/snakemake/dataset.smk: one SLURM job per participant running `critplex
        dataset ... participant`, then the group level; every table equals `critplex dataset
        ... participant` + `group` run locally."""
        work = os.path.join(WORK, "dataset")
        os.makedirs(work, exist_ok=True)
        data = os.path.join(work, "D")
        subprocess.run(["critplex", "simulate", "--layout", "bids", "--out", data, "--subjects", "2", "--regions", "24",
                        "--frames", "200", "--seed", "22"], check=True, capture_output=True)
        deriv = os.path.join(data, "derivatives", "critplex-simulate")
        atlas = os.path.join(deriv, "space-sleeplab_desc-demoatlas_dseg.nii.gz")
        labels = os.path.join(deriv, "space-sleeplab_desc-demoatlas_dseg.tsv")
        with open(os.path.join(data, "cohort_config.json")) as f:
            cfg = json.load(f)
        cfg["sweep"] = {"max_density": 0.3, "grid": 0.02, "curvature": {}}
        cfg["null"] = {"model": "rewire", "count": 3, "seed": 5}
        analysis = os.path.join(work, "analysis.json")
        with open(analysis, "w") as f:
            json.dump(cfg, f)
        flow = os.path.join(work, "slurm-results")
        workflow = os.path.join(os.path.dirname(SNAKEFILE), "dataset.smk")
        watcher = QueueWatcher()
        watcher.start()
        t0 = time.monotonic()
        run = subprocess.run(["snakemake", "-s", workflow, "--slurm", "--jobs", "4", "--max-status-checks-per-second", "1",
                              "--directory", work, "--config", f"derivatives={deriv}", f"atlas={atlas}",
                              f"atlas_labels={labels}", f"analysis={analysis}", f"out={flow}",
                              f"critplex={shutil.which('critplex')}"], capture_output=True, text=True)
        slurm_seconds = time.monotonic() - t0
        watcher.stop.set()
        watcher.join()
        self.assertEqual(run.returncode, 0, run.stderr[-4000:])
        t0 = time.monotonic()
        local = os.path.join(work, "local-results")
        subprocess.run(["critplex", "dataset", deriv, local, "participant", "--atlas", atlas, "--atlas-labels", labels,
                        "--config", analysis], check=True, capture_output=True)
        subprocess.run(["critplex", "dataset", deriv, local, "group"], check=True, capture_output=True)
        local_seconds = time.monotonic() - t0
        print(f"dataset workflow on SLURM {slurm_seconds:.1f} s, local participant + group {local_seconds:.1f} s; "
              f"most jobs running at once: {len(watcher.most)}", file=sys.stderr)
        # 4 participant jobs and the group job ran through SLURM, at least two at once.
        slurm_logs = glob.glob(os.path.join(work, ".snakemake", "slurm_logs", "rule_*", "*.log"))
        self.assertEqual(len(slurm_logs), 5, slurm_logs)
        self.assertGreaterEqual(len(watcher.most), 2, f"jobs seen running: {sorted(watcher.seen)}")
        tables = sorted(os.path.relpath(os.path.join(d, f), local) for d, _, files in os.walk(local)
                        for f in files if f.endswith(".tsv"))
        self.assertEqual(len(tables), 4 * 3 + 3)
        for name in tables:
            self.assertEqual(read(os.path.join(flow, name)), read(os.path.join(local, name)), name)
        self.assertTrue(os.path.isfile(os.path.join(flow, "group", "report.html")))


if __name__ == "__main__":
    unittest.main()
