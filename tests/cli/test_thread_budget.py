"""A cohort run never starts more threads than the machine has cores.

W workers each run one subject; every engine of a subject then gets at most
cores / W threads (pipeline/cohort.cpp). The test samples the process's threads from
/proc/PID/task (Linux) every few milliseconds during a run with 2 workers and an
engine config that asks for every core (threads 0), and checks that the threads other
than the waiting main thread never exceed the cores. It also checks that it saw the
workers at all, so a run too short to sample cannot pass by accident.
"""
import json
import os
import subprocess
import tempfile
import time
import unittest

CLI = os.environ["CRITPLEX_CLI"]

CONFIG = {
    "connect": {"method": "pearson"},
    "sweep": {"max_density": 0.6, "grid": {"step": 0.01}, "cliques": {"threads": 0},
              "homology": {"max_dimension": 2, "threads": 0}},
}


class ThreadBudget(unittest.TestCase):
    def test_two_workers_stay_within_the_cores(self):
        cores = os.cpu_count() or 1
        with tempfile.TemporaryDirectory() as tmp:
            study = os.path.join(tmp, "study")
            subprocess.run([CLI, "simulate", "--out", study, "--subjects", "6", "--regions", "60", "--frames", "300",
                            "--seed", "11"], check=True, capture_output=True)
            config = os.path.join(tmp, "config.json")
            with open(config, "w") as f:
                json.dump(CONFIG, f)
            p = subprocess.Popen([CLI, "cohort", os.path.join(study, "manifest.tsv"), "--config", config, "--out",
                                  os.path.join(tmp, "out"), "--workers", "2"],
                                 stdout=subprocess.PIPE, stderr=subprocess.PIPE)
            most = 0
            while p.poll() is None:
                try:
                    most = max(most, len(os.listdir(f"/proc/{p.pid}/task")))
                except FileNotFoundError:
                    break
                time.sleep(0.002)
            out, err = p.communicate()
            self.assertEqual(p.returncode, 0, err.decode())
        print("most threads seen:", most)
        self.assertGreaterEqual(most, 3, "the run ended before any worker was seen")
        self.assertLessEqual(most - 1, cores, f"{most - 1} working threads on {cores} cores")


if __name__ == "__main__":
    unittest.main()
