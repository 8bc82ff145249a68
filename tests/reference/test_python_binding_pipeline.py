"""The whole-subject call through the ctypes binding gives the same document as the
command line (both are the one C interface), and the host example runs."""
import json
import os
import subprocess
import tempfile
import unittest

import critplex

CLI = os.environ["CRITPLEX_CLI"]
SRC = os.environ["CRITPLEX_SOURCE_DIR"]


class PythonPipeline(unittest.TestCase):
    def test_subject_matches_command_line(self):
        with tempfile.TemporaryDirectory() as tmp:
            critplex.simulate_study(tmp + "/study", regions=24, frames=200, seed=9,
                                    groups=[{"name": "a", "subjects": 1}, {"name": "b", "subjects": 1}])
            config = {"id": "a01", "timeseries": tmp + "/study/timeseries/sub-a01_timeseries.tsv",
                      "sweep": {"max_density": 0.5, "grid": 0.05}, "null": {"model": "phase_independent", "count": 3}}
            doc = critplex.run_subject(config)
            with open(tmp + "/cfg.json", "w") as f:
                json.dump(config, f)
            os.mkdir(tmp + "/out")
            subprocess.run([CLI, "subject", tmp + "/cfg.json", "--out", tmp + "/out"], check=True, capture_output=True)
            cli_doc = json.load(open(tmp + "/out/sub-a01_topology.json"))
            self.assertEqual(doc["bands"][0]["curves"], cli_doc["bands"][0]["curves"])
            self.assertEqual(doc["bands"][0]["null"], cli_doc["bands"][0]["null"])
            with self.assertRaises(critplex.CritplexError) as e:
                critplex.run_subject({"id": "x", "timeseries": tmp + "/none.tsv"})
            self.assertIn("none.tsv", str(e.exception))

    def test_host_example_runs(self):
        env = dict(os.environ)
        p = subprocess.run(["/usr/bin/python3", os.path.join(SRC, "examples", "hosts", "python_example.py")],
                           capture_output=True, text=True, env=env)
        self.assertEqual(p.returncode, 0, p.stderr)
        self.assertIn("first chi zero", p.stdout)


if __name__ == "__main__":
    unittest.main(verbosity=2)
