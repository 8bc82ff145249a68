"""The dataset workflow (plugins/snakemake/dataset.smk) run by Snakemake itself (Debian
snakemake) with two jobs at once on a small simulated BIDS dataset (invented data): one job
per participant declaring every file it writes (listed by the dataset mode's dry run), a log
per job, then the group level and the report. Every table must equal what
`critplex dataset ... participant` + `group` write when run directly (the workflow only
splits the same work into jobs). Skipped when snakemake is not installed."""
import json
import os
import shutil
import subprocess
import tempfile
import unittest

CLI = os.environ["CRITPLEX_CLI"]
SOURCE = os.environ.get("CRITPLEX_SOURCE_DIR", os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", ".."))
WORKFLOW = os.path.join(SOURCE, "plugins", "snakemake", "dataset.smk")


def tables(root):
    found = {}
    for folder, _, files in os.walk(root):
        for name in files:
            if name.endswith(".tsv"):
                path = os.path.join(folder, name)
                with open(path) as f:
                    found[os.path.relpath(path, root)] = f.read()
    return found


@unittest.skipIf(shutil.which("snakemake") is None, "snakemake is not installed (Debian package snakemake)")
class DatasetWorkflow(unittest.TestCase):
    def test_workflow_equals_direct_run(self):
        with tempfile.TemporaryDirectory() as work:
            data = os.path.join(work, "D")
            subprocess.run([CLI, "simulate", "--layout", "bids", "--out", data, "--subjects", "2", "--regions", "12",
                            "--frames", "150"], check=True, capture_output=True)
            deriv = os.path.join(data, "derivatives", "critplex-simulate")
            atlas = os.path.join(deriv, "space-sleeplab_desc-demoatlas_dseg.nii.gz")
            labels = os.path.join(deriv, "space-sleeplab_desc-demoatlas_dseg.tsv")
            with open(os.path.join(data, "cohort_config.json")) as f:
                analysis = json.load(f)
            analysis["null"]["count"] = 3
            config = os.path.join(work, "analysis.json")
            with open(config, "w") as f:
                json.dump(analysis, f)
            flow = os.path.join(work, "flow")
            run = subprocess.run(["snakemake", "-s", WORKFLOW, "--cores", "2", "--directory", work, "--config",
                                  f"derivatives={deriv}", f"atlas={atlas}", f"atlas_labels={labels}",
                                  f"analysis={config}", f"out={flow}", f"critplex={CLI}"], capture_output=True, text=True)
            self.assertEqual(run.returncode, 0, run.stderr[-3000:])
            # 1 analysis config + 4 participants + group + report + all
            self.assertIn("8 of 8 steps (100%) done", run.stderr)
            for participant in ("rested01", "rested02", "deprived01", "deprived02"):
                self.assertTrue(os.path.isfile(os.path.join(flow, "logs", f"sub-{participant}.log")))
            self.assertTrue(os.path.isfile(os.path.join(flow, "group", "report.html")))

            direct = os.path.join(work, "direct")
            subprocess.run([CLI, "dataset", deriv, direct, "participant", "--atlas", atlas, "--atlas-labels", labels,
                            "--config", config], check=True, capture_output=True)
            subprocess.run([CLI, "dataset", deriv, direct, "group"], check=True, capture_output=True)
            got, expected = tables(flow), tables(direct)
            self.assertEqual(sorted(got), sorted(expected))
            self.assertEqual(len(expected), 4 * 3 + 3)  # per participant 3 TSVs; curves_long, summaries, group_tests
            for name in expected:
                self.assertEqual(got[name], expected[name], name)


if __name__ == "__main__":
    unittest.main()
