"""Options and configs as hostile JSON: nesting beyond the documented limit (64 levels),
keys given twice and huge values are refused with a short message naming the argument,
through the command line and the C interface, without a crash (issue 13)."""
import ctypes
import os
import subprocess
import tempfile
import unittest

CLI = os.environ["CRITPLEX_CLI"]
LIB = ctypes.CDLL(os.environ["CRITPLEX_LIBRARY"])
LIB.cpx_last_error.restype = ctypes.c_char_p

DEEP = "[" * 100000 + "]" * 100000          # crashed the parser's callers (stack overflow) before
DEEP_OPTIONS = '{"max_density": ' + DEEP + "}"
DEEP_ARG = '{"max_density": ' + "[" * 60000 + "]" * 60000 + "}"  # fits one argument (< 128 KiB)
AT_LIMIT = '{"x": ' + "[" * 63 + "]" * 63 + "}"  # 64 levels: accepted by the scan


def series_text(frames=40, regions=4):
    rows = ["\t".join(f"r{j}" for j in range(regions))]
    for t in range(frames):
        rows.append("\t".join(str(((t * 7 + j * 3) % 11) + 0.5 * j + (t % 3)) for j in range(regions)))
    return "\n".join(rows) + "\n"


class OptionsLimits(unittest.TestCase):
    def setUp(self):
        self.dir = tempfile.TemporaryDirectory()
        self.series = os.path.join(self.dir.name, "series.tsv")
        with open(self.series, "w") as f:
            f.write(series_text())

    def tearDown(self):
        self.dir.cleanup()

    def cli(self, *args):
        return subprocess.run([CLI, *args], capture_output=True, text=True, cwd=self.dir.name)

    def refused(self, p, *needles, code=2):
        self.assertEqual(p.returncode, code, p.stderr)  # a signal gives a negative status
        for n in needles:
            self.assertIn(n, p.stderr)
        self.assertLess(len(p.stderr), 1000, "the message must not echo the whole input")
        self.assertEqual([f for f in os.listdir(self.dir.name) if ".tmp-" in f], [])

    def test_cli_deep_nesting_every_command(self):
        out = os.path.join(self.dir.name, "m.tsv")
        self.refused(self.cli("connect", self.series, "--out", out, "--options", DEEP_ARG), "--options", "nested deeper than 64")
        self.assertFalse(os.path.exists(out))
        self.refused(self.cli("sweep", self.series, "--out", out, "--options", DEEP_ARG), "--options", "nested deeper than 64")
        self.refused(self.cli("compare", self.dir.name, "--options", DEEP_ARG), "--options", "nested deeper than 64")
        self.refused(self.cli("simulate", "--out", "sim", "--options", DEEP_ARG), "--options", "nested deeper than 64")
        self.refused(self.cli("subject", "--out", self.dir.name, "--connect", DEEP_ARG), "--connect", "nested deeper than 64")
        config = os.path.join(self.dir.name, "config.json")
        with open(config, "w") as f:
            f.write(DEEP_OPTIONS)
        self.refused(self.cli("subject", config, "--out", self.dir.name), "config.json", "nested deeper than 64")
        self.refused(self.cli("cohort", "m.tsv", "--config", config, "--out", "c"), "config.json", "nested deeper than 64", code=1)

    def test_cli_duplicate_key(self):
        out = os.path.join(self.dir.name, "m.tsv")
        p = self.cli("connect", self.series, "--out", out, "--options", '{"method": "pearson", "method": "ledoit_wolf"}')
        self.refused(p, "--options", 'key "method" appears twice')
        self.assertFalse(os.path.exists(out))
        # the same key in two different objects is fine
        p = self.cli("connect", self.series, "--out", out, "--options", '{"method": "pearson"}')
        self.assertEqual(p.returncode, 0, p.stderr)

    def test_cli_huge_value_is_quoted_short(self):
        out = os.path.join(self.dir.name, "m.tsv")
        p = self.cli("connect", self.series, "--out", out, "--options", '{"method": "' + "x" * 100000 + '"}')
        self.refused(p, "method", "characters)", code=1)

    def c_call(self, options):
        plan = ctypes.c_char_p()
        status = LIB.cpx_simulate_plan(options.encode(), ctypes.byref(plan))
        message = LIB.cpx_last_error().decode()
        return status, message

    def test_c_interface_deep_nesting(self):
        status, message = self.c_call(DEEP_OPTIONS)
        self.assertEqual(status, 1)  # CPX_ERR_ARGUMENT
        self.assertIn("nested deeper than 64 levels at line 1, column 80", message)
        status, message = self.c_call('{"k": "[[[[[[[[' + "[" * 200 + '"}')  # brackets in strings do not count
        self.assertNotIn("nested deeper", message)
        status, message = self.c_call(AT_LIMIT)
        self.assertNotIn("nested deeper", message)
        self.assertIn('"x"', message)  # refused as an unknown key, after parsing

    def test_c_interface_duplicate_key_and_long_value(self):
        status, message = self.c_call('{"seed": 1, "regions": 5, "seed": 2}')
        self.assertEqual(status, 1)
        self.assertIn('key "seed" appears twice', message)
        status, message = self.c_call('{"regions": "' + "9" * 100000 + '"}')
        self.assertEqual(status, 1)
        self.assertIn("regions", message)
        self.assertLess(len(message), 600)
        # a broken text: the parser's message is cut too
        status, message = self.c_call('{"regions": ' + "1" * 100000 + "x}")
        self.assertEqual(status, 1)
        self.assertLess(len(message), 600)
        status, message = self.c_call('{"regions": 1e400}')
        self.assertEqual(status, 1)
        self.assertIn("1e400", message)


if __name__ == "__main__":
    unittest.main()
