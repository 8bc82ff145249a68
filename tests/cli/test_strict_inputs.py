"""Strict where silence misleads (issue 13): unknown covariates, duplicate region names,
malformed NPY headers, non-UTF-8 region names, byte-order marks, folders given as files.
Each refusal names the file and place, exits non-zero and leaves no output."""
import os
import shutil
import struct
import subprocess
import tempfile
import unittest

CLI = os.environ["CRITPLEX_CLI"]


def npy_bytes(header_dict, payload):
    h = header_dict
    total = 10 + len(h) + 1
    h += " " * ((64 - total % 64) % 64) + "\n"
    return b"\x93NUMPY\x01\x00" + struct.pack("<H", len(h)) + h.encode() + payload


def series_rows(names, frames=30):
    rows = ["\t".join(names)]
    for t in range(frames):
        rows.append("\t".join(str(((t * 5 + j * 3) % 13) + 0.5 * j) for j in range(len(names))))
    return "\n".join(rows) + "\n"


class StrictInputs(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        # A small simulated cohort (invented data), run once for the compare checks.
        cls.cohort = tempfile.mkdtemp()
        sim, res = os.path.join(cls.cohort, "sim"), os.path.join(cls.cohort, "res")
        subprocess.run([CLI, "simulate", "--out", sim, "--regions", "10", "--frames", "200", "--seed", "3"],
                       check=True, capture_output=True)
        subprocess.run([CLI, "cohort", os.path.join(sim, "manifest.tsv"), "--config",
                        os.path.join(sim, "cohort_config.json"), "--out", res, "--workers", "2"],
                       check=True, capture_output=True)
        cls.results = res

    @classmethod
    def tearDownClass(cls):
        shutil.rmtree(cls.cohort)

    def setUp(self):
        self.tmp = tempfile.TemporaryDirectory()
        self.dir = self.tmp.name

    def tearDown(self):
        self.tmp.cleanup()

    def write(self, name, content):
        path = os.path.join(self.dir, name)
        with open(path, "wb") as f:
            f.write(content if isinstance(content, bytes) else content.encode())
        return path

    def refuse(self, args, *needles, code=1):
        before = set(os.listdir(self.dir))
        p = subprocess.run([CLI, *args], capture_output=True, text=True)
        self.assertEqual(p.returncode, code, p.stderr)
        for n in needles:
            self.assertIn(n, p.stderr)
        self.assertNotIn("internal error", p.stderr)
        self.assertEqual(set(os.listdir(self.dir)), before, "nothing may be written")
        return p.stderr

    def test_unknown_covariate(self):
        err = self.refuse(["compare", self.results, "--covariates", "age,handedness"], '"handedness"',
                          os.path.join(self.results, "manifest.tsv"))
        self.assertIn("covariate columns: age", err)
        p = subprocess.run([CLI, "compare", self.results, "--covariates", "age"], capture_output=True, text=True)
        self.assertEqual(p.returncode, 0, p.stderr)

    def test_manifest_with_byte_order_mark(self):
        copy = os.path.join(self.dir, "res")
        shutil.copytree(self.results, copy)
        manifest = os.path.join(copy, "manifest.tsv")
        with open(manifest, "rb") as f:
            body = f.read()
        with open(manifest, "wb") as f:
            f.write(b"\xef\xbb\xbf" + body)
        p = subprocess.run([CLI, "compare", copy], capture_output=True, text=True)
        self.assertEqual(p.returncode, 0, p.stderr)

    def test_manifest_duplicate_column(self):
        copy = os.path.join(self.dir, "res")
        shutil.copytree(self.results, copy)
        manifest = os.path.join(copy, "manifest.tsv")
        with open(manifest) as f:
            lines = f.read().splitlines()
        with open(manifest, "w") as f:
            f.write("\n".join([lines[0] + "\tage"] + [l + "\t1" for l in lines[1:]]) + "\n")
        p = subprocess.run([CLI, "compare", copy], capture_output=True, text=True)
        self.assertNotEqual(p.returncode, 0)
        self.assertIn("manifest.tsv', line 1: column \"age\" appears twice (columns 4 and 5)", p.stderr)

    def test_duplicate_region_names_in_header(self):
        path = self.write("dup.tsv", series_rows(["amy", "hip", "amy", "ins"]))
        self.refuse(["connect", path, "--out", os.path.join(self.dir, "m.tsv")], "dup.tsv', line 1",
                    "region name 'amy' appears twice (columns 1 and 3)")

    def test_duplicate_region_names_in_matrix(self):
        path = self.write("m.tsv", "\n".join(["# a note", "name\ta\tb\ta", "a\t1\t0.5\t0.2", "b\t0.5\t1\t0.1",
                                              "a\t0.2\t0.1\t1"]) + "\n")
        self.refuse(["sweep", path, "--out", os.path.join(self.dir, "c.tsv")], "m.tsv', line 2",
                    "region name 'a' appears twice (columns 1 and 3)")

    def test_duplicate_region_names_in_matrix_rows(self):
        # without a header row the names are the first column: both lines are named
        import ctypes
        lib = ctypes.CDLL(os.environ["CRITPLEX_LIBRARY"])
        lib.cpx_last_error.restype = ctypes.c_char_p
        path = self.write("rows.tsv", "\n".join(["a\t1\t0.5\t0.2", "b\t0.5\t1\t0.1", "# note", "a\t0.2\t0.1\t1"]) + "\n")
        handle = ctypes.c_void_p()
        status = lib.cpx_matrix_read(path.encode(), b'{"header": false}', ctypes.byref(handle))
        self.assertEqual(status, 4)  # CPX_ERR_DATA
        self.assertIn("rows.tsv': region name 'a' appears twice (lines 1 and 4)", lib.cpx_last_error().decode())

    def test_non_utf8_region_name(self):
        path = self.write("latin1.tsv", series_rows(["a", "b", "c"]).replace("b", "r\xe9gion", 1).encode("latin-1"))
        self.refuse(["connect", path, "--out", os.path.join(self.dir, "m.tsv")], "latin1.tsv', line 1, column 2",
                    "not valid UTF-8")

    def test_non_utf8_region_name_subject_writes_nothing(self):
        path = self.write("latin1.tsv", series_rows(["a", "b", "c", "d"], 120).replace("b", "r\xe9gion", 1).encode("latin-1"))
        out = os.path.join(self.dir, "out")
        p = subprocess.run([CLI, "subject", "--timeseries", path, "--id", "s01", "--out", out], capture_output=True, text=True)
        self.assertNotEqual(p.returncode, 0)
        self.assertIn("latin1.tsv', line 1, column 2", p.stderr)
        self.assertNotIn("internal error", p.stderr)
        self.assertFalse(os.path.exists(out) and os.listdir(out), "no subject file may be written")

    def test_series_with_byte_order_mark(self):
        path = self.write("bom.tsv", b"\xef\xbb\xbf" + series_rows(["a", "b", "c"]).encode())
        p = subprocess.run([CLI, "connect", path, "--out", os.path.join(self.dir, "m.tsv")], capture_output=True, text=True)
        self.assertEqual(p.returncode, 0, p.stderr)
        with open(os.path.join(self.dir, "m.tsv")) as f:
            self.assertEqual(f.readline(), "name\ta\tb\tc\n")

    def test_npy_bad_shape(self):
        for shape, name in (("(3x, 2)", "x.npy"), ("(99999999999999999999999, 2)", "big.npy"), ("(-3, 2)", "neg.npy")):
            path = self.write(name, npy_bytes("{'descr': '<f8', 'fortran_order': False, 'shape': %s, }" % shape, bytes(48)))
            self.refuse(["connect", path, "--out", os.path.join(self.dir, "m.tsv")], name + "'", "malformed NPY header")

    def test_folder_as_input(self):
        folder = os.path.join(self.dir, "series.tsv")
        os.mkdir(folder)
        self.refuse(["connect", folder, "--out", os.path.join(self.dir, "m.tsv")], "series.tsv", "is a folder")
        self.refuse(["sweep", folder, "--out", os.path.join(self.dir, "c.tsv")], "series.tsv", "is a folder")

    def test_huge_cell_is_not_echoed(self):
        path = self.write("big.tsv", "a\tb\n1\t2\n" + "x" * 1000000 + "\t3\n4\t5\n")
        err = self.refuse(["connect", path, "--out", os.path.join(self.dir, "m.tsv")], "big.tsv', line 3", "is not a number")
        self.assertLess(len(err), 600)


if __name__ == "__main__":
    unittest.main()
