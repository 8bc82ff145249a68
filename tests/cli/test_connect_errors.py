"""`critplex connect` on bad input: a clear message naming the file and place, a
non-zero exit status, and no output file left behind."""
import os
import struct
import subprocess
import tempfile
import unittest

CLI = os.environ["CRITPLEX_CLI"]


def npy_bytes(header_dict: str, payload: bytes) -> bytes:
    h = header_dict
    total = 10 + len(h) + 1
    h += " " * ((64 - total % 64) % 64) + "\n"
    return b"\x93NUMPY\x01\x00" + struct.pack("<H", len(h)) + h.encode() + payload


class ConnectErrors(unittest.TestCase):
    def setUp(self):
        self.dir = tempfile.TemporaryDirectory()
        self.out = os.path.join(self.dir.name, "matrix.tsv")

    def tearDown(self):
        self.dir.cleanup()

    def write(self, name, content):
        path = os.path.join(self.dir.name, name)
        with open(path, "wb") as f:
            f.write(content if isinstance(content, bytes) else content.encode())
        return path

    def refuse(self, path, *needles):
        p = subprocess.run([CLI, "connect", path, "--out", self.out], capture_output=True, text=True)
        self.assertNotEqual(p.returncode, 0, p.stdout)
        for needle in needles:
            self.assertIn(needle, p.stderr)
        self.assertFalse(os.path.exists(self.out), "no output file may be left behind")
        self.assertEqual([f for f in os.listdir(self.dir.name) if ".tmp-" in f], [])
        return p.stderr

    def test_missing_file(self):
        self.refuse(os.path.join(self.dir.name, "absent.tsv"), "absent.tsv", "No such file")

    def test_empty_file(self):
        self.refuse(self.write("empty.tsv", ""), "empty.tsv", "is empty")

    def test_ragged_rows(self):
        self.refuse(self.write("ragged.tsv", "a\tb\tc\n1\t2\t3\n4\t5\n7\t8\t9\n"), "ragged.tsv", "line 3", "ragged")

    def test_non_numeric_cell(self):
        self.refuse(self.write("word.csv", "a,b\n1,2\n3,oops\n5,7\n"), "word.csv", "line 3, column 2 ('b')", "'oops' is not a number")

    def test_nan_value(self):
        self.refuse(self.write("nan.tsv", "a\tb\n1\t2\nNaN\t3\n5\t7\n"), "nan.tsv", "line 3, column 1 ('a')", "not finite")

    def test_infinite_value(self):
        self.refuse(self.write("inf.tsv", "a\tb\n1\t2\n2\t-inf\n5\t7\n"), "inf.tsv", "line 3", "not finite")

    def test_constant_region(self):
        self.refuse(self.write("flat.tsv", "a\tb\tc\n1\t2\t3\n4\t2\t1\n5\t2\t8\n"), "flat.tsv", "region 'b'", "constant")

    def test_too_few_time_points(self):
        self.refuse(self.write("short.tsv", "a\tb\n1\t2\n3\t1\n"), "short.tsv", "at least 3 time points")

    def test_too_few_regions(self):
        self.refuse(self.write("one.tsv", "a\n1\n2\n3\n"), "one.tsv", "at least 2 regions")

    def test_truncated_npy_header(self):
        self.refuse(self.write("trunc.npy", b"\x93NUMPY\x01\x00\x76\x00{'descr': '<f8'"), "trunc.npy", "truncated NPY header")

    def test_unsupported_npy_header(self):
        body = npy_bytes("{'descr': '>c16', 'fortran_order': False, 'shape': (3, 2), }", bytes(96))
        self.refuse(self.write("complex.npy", body), "complex.npy", "unsupported NPY data type '>c16'")

    def test_truncated_npy_data(self):
        body = npy_bytes("{'descr': '<f8', 'fortran_order': False, 'shape': (30, 2), }", bytes(16))
        self.refuse(self.write("short.npy", body), "short.npy", "truncated NPY data")

    def test_unknown_flag_and_missing_out(self):
        good = self.write("good.tsv", "a\tb\n1\t2\n2\t1\n3\t5\n")
        p = subprocess.run([CLI, "connect", good, "--out", self.out, "--colour", "x"], capture_output=True, text=True)
        self.assertEqual(p.returncode, 2)
        self.assertIn("unknown option '--colour'", p.stderr)
        p = subprocess.run([CLI, "connect", good], capture_output=True, text=True)
        self.assertEqual(p.returncode, 2)
        self.assertIn("--out", p.stderr)
        self.assertFalse(os.path.exists(self.out))

    def test_unwritable_output(self):
        good = self.write("good.tsv", "a\tb\n1\t2\n2\t1\n3\t5\n")
        # Missing folders are created (issue 13); a folder path through a file is refused.
        self.write("plain-file", "x")
        target = os.path.join(self.dir.name, "plain-file", "m.tsv")
        p = subprocess.run([CLI, "connect", good, "--out", target], capture_output=True, text=True)
        self.assertNotEqual(p.returncode, 0)
        self.assertIn("'" + os.path.join(self.dir.name, "plain-file") + "' is a file, not a folder", p.stderr)

    def test_good_input_writes_tsv_and_json(self):
        good = self.write("good.tsv", "a\tb\tc\n1\t2\t0\n2\t1\t1\n3\t5\t0\n4\t4\t2\n")
        p = subprocess.run([CLI, "connect", good, "--out", self.out], capture_output=True, text=True)
        self.assertEqual(p.returncode, 0, p.stderr)
        with open(self.out) as f:
            lines = f.read().splitlines()
        self.assertEqual(lines[0].split("\t"), ["name", "a", "b", "c"])
        self.assertEqual(lines[1].split("\t")[0:2], ["a", "1"])
        js = os.path.join(self.dir.name, "m.json")
        p = subprocess.run([CLI, "connect", good, "--out", js, "--fisher-z"], capture_output=True, text=True)
        self.assertEqual(p.returncode, 0, p.stderr)
        import json
        with open(js) as f:
            doc = json.load(f)
        self.assertEqual(doc["names"], ["a", "b", "c"])
        self.assertTrue(doc["info"]["fisher_z"])
        self.assertEqual(doc["values"][0][0], 0.0)


if __name__ == "__main__":
    unittest.main(verbosity=2)
