"""The bad-input catalogue (issue 13): one table of broken, hostile and misleading inputs
across every reader and command. Each case asserts the exit status, that the message names
the file, line, column or key, that no output or temporary file is left, and that the
refusal stays under 200 MB of memory (peak resident size from /usr/bin/time -v, Debian
package `time`)."""
import gzip
import os
import shutil
import struct
import subprocess
import tempfile
import unittest

CLI = os.environ["CRITPLEX_CLI"]
TIME = "/usr/bin/time"
MEMORY_LIMIT_KB = 200 * 1024


def series(names=("a", "b", "c"), frames=40):
    rows = ["\t".join(names)]
    for t in range(frames):
        rows.append("\t".join(str(((t * 7 + j * 3) % 11) + 0.5 * j + (t % 3)) for j in range(len(names))))
    return "\n".join(rows) + "\n"


def matrix(names=("a", "b", "c"), values=None):
    n = len(names)
    values = values or [[1.0 if i == j else 0.1 * (i + j + 1) for j in range(n)] for i in range(n)]
    rows = ["name\t" + "\t".join(names)] + [names[i] + "\t" + "\t".join(str(v) for v in values[i]) for i in range(n)]
    return "\n".join(rows) + "\n"


def npy(header, payload=b""):
    total = 10 + len(header) + 1
    header += " " * ((64 - total % 64) % 64) + "\n"
    return b"\x93NUMPY\x01\x00" + struct.pack("<H", len(header)) + header.encode() + payload


def f8(values):
    return struct.pack("<%dd" % len(values), *values)


DEEP = '{"a": ' + "[" * 30000 + "]" * 30000 + "}"
GOOD = {"good.tsv": series(), "good_m.tsv": matrix()}
MANIFEST_HEAD = "subject\tgroup\ttimeseries\tage\n"
CONFIG = '{"connect": {"method": "pearson"}, "sweep": {"max_density": 0.5, "grid": 0.1}}'

# (name, files, arguments ({d} = the case's folder), exit status, needles in stderr)
CASES = [
    # ---- time series tables (connect) -------------------------------------------------
    ("series missing", {}, ["connect", "{d}/absent.tsv", "--out", "{d}/o.tsv"], 1, ["absent.tsv", "No such file"]),
    ("series empty", {"e.tsv": ""}, ["connect", "{d}/e.tsv", "--out", "{d}/o.tsv"], 1, ["e.tsv", "is empty"]),
    ("series header only", {"h.tsv": "a\tb\n"}, ["connect", "{d}/h.tsv", "--out", "{d}/o.tsv"], 1, ["h.tsv", "no data rows"]),
    ("series ragged", {"r.tsv": "a\tb\tc\n1\t2\t3\n4\t5\n"}, ["connect", "{d}/r.tsv", "--out", "{d}/o.tsv"], 1,
     ["r.tsv", "line 3", "ragged"]),
    ("series word", {"w.tsv": "a\tb\n1\t2\n3\toops\n4\t5\n"}, ["connect", "{d}/w.tsv", "--out", "{d}/o.tsv"], 1,
     ["w.tsv", "line 3, column 2 ('b')", "'oops'"]),
    ("series NaN", {"n.tsv": "a\tb\n1\t2\nNaN\t3\n5\t7\n"}, ["connect", "{d}/n.tsv", "--out", "{d}/o.tsv"], 1,
     ["n.tsv", "line 3, column 1", "not finite"]),
    ("series inf", {"i.tsv": "a\tb\n1\t2\n2\t-inf\n5\t7\n"}, ["connect", "{d}/i.tsv", "--out", "{d}/o.tsv"], 1,
     ["i.tsv", "line 3, column 2", "not finite"]),
    ("series overflow", {"o1.tsv": "a\tb\n1\t2\n2\t1e999\n5\t7\n"}, ["connect", "{d}/o1.tsv", "--out", "{d}/o.tsv"], 1,
     ["o1.tsv", "line 3", "not finite"]),
    ("series constant", {"c.tsv": "a\tb\tc\n1\t2\t3\n4\t2\t1\n5\t2\t8\n"}, ["connect", "{d}/c.tsv", "--out", "{d}/o.tsv"], 1,
     ["c.tsv", "region 'b'", "constant"]),
    ("series too short", {"s.tsv": "a\tb\n1\t2\n3\t1\n"}, ["connect", "{d}/s.tsv", "--out", "{d}/o.tsv"], 1,
     ["s.tsv", "at least 3 time points"]),
    ("series one region", {"one.tsv": "a\n1\n2\n3\n"}, ["connect", "{d}/one.tsv", "--out", "{d}/o.tsv"], 1,
     ["one.tsv", "at least 2 regions"]),
    ("series duplicate names", {"dup.tsv": series(("x", "y", "x"))}, ["connect", "{d}/dup.tsv", "--out", "{d}/o.tsv"], 1,
     ["dup.tsv", "line 1", "'x' appears twice (columns 1 and 3)"]),
    ("series non-UTF-8 name", {"l1.tsv": series(("a", "r\xe9g", "c")).encode("latin-1")},
     ["connect", "{d}/l1.tsv", "--out", "{d}/o.tsv"], 1, ["l1.tsv", "line 1, column 2", "not valid UTF-8"]),
    ("series control character", {"cc.tsv": series(("a", "b\x01", "c"))}, ["connect", "{d}/cc.tsv", "--out", "{d}/o.tsv"], 1,
     ["cc.tsv", "line 1, column 2", "control character"]),
    ("series long name", {"ln.tsv": series(("a", "n" * 300, "c"))}, ["connect", "{d}/ln.tsv", "--out", "{d}/o.tsv"], 1,
     ["ln.tsv", "line 1, column 2", "longer than 256 bytes"]),
    ("series header too short", {"hs.tsv": "a\tb\n1\t2\t3\n4\t5\t6\n7\t8\t1\n"}, ["connect", "{d}/hs.tsv", "--out", "{d}/o.tsv"], 1,
     ["hs.tsv", "line 1", "header has 2 names"]),
    ("csv word", {"w.csv": "a,b\n1,2\n3,x\n5,7\n"}, ["connect", "{d}/w.csv", "--out", "{d}/o.tsv"], 1,
     ["w.csv", "line 3, column 2", "'x' is not a number"]),
    ("text word", {"w.txt": "1 2\n3 4\n5 six\n7 8\n"}, ["connect", "{d}/w.txt", "--out", "{d}/o.tsv"], 1,
     ["w.txt", "line 3, column 2", "'six' is not a number"]),
    ("series is a folder", {"dir.tsv/": None}, ["connect", "{d}/dir.tsv", "--out", "{d}/o.tsv"], 1, ["dir.tsv", "is a folder"]),
    ("series 1 MB cell", {"big.tsv": "a\tb\n1\t2\n" + "z" * 1000000 + "\t3\n4\t5\n"},
     ["connect", "{d}/big.tsv", "--out", "{d}/o.tsv"], 1, ["big.tsv", "line 3, column 1", "(1000000 bytes)"]),
    ("series unknown input format", {}, ["connect", "{d}/good.tsv", "--input-format", "xls", "--out", "{d}/o.tsv"], 1,
     ["\"format\"", "xls"]),
    # ---- NPY --------------------------------------------------------------------------
    ("npy magic", {"m.npy": b"NUMPY" + bytes(60)}, ["connect", "{d}/m.npy", "--out", "{d}/o.tsv"], 1, ["m.npy", "bad magic"]),
    ("npy truncated header", {"t.npy": b"\x93NUMPY\x01\x00\x76\x00{'descr'"}, ["connect", "{d}/t.npy", "--out", "{d}/o.tsv"], 1,
     ["t.npy", "truncated NPY header"]),
    ("npy complex", {"c.npy": npy("{'descr': '<c16', 'fortran_order': False, 'shape': (3, 2), }", bytes(96))},
     ["connect", "{d}/c.npy", "--out", "{d}/o.tsv"], 1, ["c.npy", "unsupported NPY data type '<c16'"]),
    ("npy big-endian", {"b.npy": npy("{'descr': '>f8', 'fortran_order': False, 'shape': (3, 2), }", bytes(48))},
     ["connect", "{d}/b.npy", "--out", "{d}/o.tsv"], 1, ["b.npy", "'>f8'"]),
    ("npy truncated data", {"d.npy": npy("{'descr': '<f8', 'fortran_order': False, 'shape': (30, 2), }", bytes(16))},
     ["connect", "{d}/d.npy", "--out", "{d}/o.tsv"], 1, ["d.npy", "truncated NPY data"]),
    ("npy 3-D", {"3.npy": npy("{'descr': '<f8', 'fortran_order': False, 'shape': (2, 2, 2), }", bytes(64))},
     ["connect", "{d}/3.npy", "--out", "{d}/o.tsv"], 1, ["3.npy", "2-D array", "3 dimensions"]),
    ("npy shape text", {"s.npy": npy("{'descr': '<f8', 'fortran_order': False, 'shape': (3x, 2), }", bytes(48))},
     ["connect", "{d}/s.npy", "--out", "{d}/o.tsv"], 1, ["s.npy", "malformed NPY header", "'3x'"]),
    ("npy shape overflow", {"o.npy": npy("{'descr': '<f8', 'fortran_order': False, 'shape': (99999999999999999999999, 2), }")},
     ["connect", "{d}/o.npy", "--out", "{d}/o.tsv"], 1, ["o.npy", "malformed NPY header"]),
    ("npy huge shape small file", {"h.npy": npy("{'descr': '<f8', 'fortran_order': False, 'shape': (4000000000, 4000000000), }")},
     ["connect", "{d}/h.npy", "--out", "{d}/o.tsv"], 1, ["h.npy", "truncated NPY data"]),
    ("npy empty array", {"z.npy": npy("{'descr': '<f8', 'fortran_order': False, 'shape': (0, 2), }")},
     ["connect", "{d}/z.npy", "--out", "{d}/o.tsv"], 1, ["z.npy", "array is empty"]),
    ("npy NaN", {"nan.npy": npy("{'descr': '<f8', 'fortran_order': False, 'shape': (3, 2), }", f8([1, 2, 3, float("nan"), 5, 6]))},
     ["connect", "{d}/nan.npy", "--out", "{d}/o.tsv"], 1, ["nan.npy", "row 2, column 2", "not finite"]),
    # found by tests/fuzz/fuzz_tables (an uncaught std::out_of_range before)
    ("npy blank fortran_order", {"f.npy": "@npy_blank"}, ["connect", "{d}/f.npy", "--out", "{d}/o.tsv"], 1,
     ["f.npy", "malformed NPY header"]),
    ("npy version", {"v.npy": b"\x93NUMPY\x09\x00" + bytes(60)}, ["connect", "{d}/v.npy", "--out", "{d}/o.tsv"], 1,
     ["v.npy", "unsupported NPY format version 9"]),
    # ---- connect options --------------------------------------------------------------
    ("options not JSON", {}, ["connect", "{d}/good.tsv", "--out", "{d}/o.tsv", "--options", "{method: pearson}"], 2,
     ["--options", "not valid JSON"]),
    ("options deep", {}, ["connect", "{d}/good.tsv", "--out", "{d}/o.tsv", "--options", DEEP], 2,
     ["--options", "nested deeper than 64 levels"]),
    ("options duplicate key", {}, ["connect", "{d}/good.tsv", "--out", "{d}/o.tsv", "--options", '{"method": "pearson", "method": "oas"}'],
     2, ["--options", "\"method\" appears twice"]),
    ("options unknown key", {}, ["connect", "{d}/good.tsv", "--out", "{d}/o.tsv", "--options", '{"methd": "pearson"}'], 1,
     ["methd"]),
    ("options bad method", {}, ["connect", "{d}/good.tsv", "--out", "{d}/o.tsv", "--method", "guess"], 1, ["method", "guess"]),
    ("options not an object", {}, ["connect", "{d}/good.tsv", "--out", "{d}/o.tsv", "--options", "[1, 2]"], 2,
     ["--options must be a JSON object"]),
    ("options 1e400", {}, ["connect", "{d}/good.tsv", "--out", "{d}/o.tsv", "--options", '{"sampling_interval": 1e400}'], 2,
     ["--options", "not usable JSON"]),
    ("options wrong type", {}, ["connect", "{d}/good.tsv", "--out", "{d}/o.tsv", "--options", '{"fisher_z": "yes"}'], 1,
     ["fisher_z", "\"yes\""]),
    ("options null", {}, ["connect", "{d}/good.tsv", "--out", "{d}/o.tsv", "--options", '{"method": null}'], 1,
     ["method", "leave the key out"]),
    ("options file missing", {}, ["connect", "{d}/good.tsv", "--out", "{d}/o.tsv", "--options", "@{d}/nope.json"], 2,
     ["--options", "nope.json"]),
    ("options bands malformed", {}, ["connect", "{d}/good.tsv", "--out", "{d}/o.tsv", "--options", '{"bands": [1, 2]}'], 1,
     ["bands"]),
    ("options band above Nyquist", {},
     ["connect", "{d}/good.tsv", "--out", "{d}/o.tsv", "--options", '{"sampling_interval": 2, "bands": {"fast": [0.1, 0.9]}}'],
     1, ["\"fast\""]),
    ("options negative sampling interval", {}, ["connect", "{d}/good.tsv", "--out", "{d}/o.tsv", "--sampling-interval", "-2"], 1,
     ["sampling_interval"]),
    ("options sampling interval text", {}, ["connect", "{d}/good.tsv", "--out", "{d}/o.tsv", "--sampling-interval", "fast"], 2,
     ["--sampling-interval", "'fast'"]),
    ("options huge value", {}, ["connect", "{d}/good.tsv", "--out", "{d}/o.tsv", "--options", '{"method": "' + "m" * 100000 + '"}'],
     1, ["method", "characters)"]),
    # ---- confounds ------------------------------------------------------------------
    ("confounds missing file", {},
     ["connect", "{d}/good.tsv", "--out", "{d}/o.tsv", "--options",
      '{"clean": {"regressor_table": "{d}/none.tsv", "regressor_columns": ["x"]}}'], 1, ["none.tsv"]),
    ("confounds unknown column", {"conf.tsv": "x\ty\n" + "".join(f"{t % 5}\t{t % 3}\n" for t in range(40))},
     ["connect", "{d}/good.tsv", "--out", "{d}/o.tsv", "--options",
      '{"clean": {"regressor_table": "{d}/conf.tsv", "regressor_columns": ["motion_z"]}}'], 1, ["conf.tsv", "motion_z"]),
    ("confounds row count", {"conf.tsv": "x\n" + "".join(f"{t % 5}\n" for t in range(12))},
     ["connect", "{d}/good.tsv", "--out", "{d}/o.tsv", "--options",
      '{"clean": {"regressor_table": "{d}/conf.tsv", "regressor_columns": ["x"]}}'], 1, ["conf.tsv", "12 rows", "40 frames"]),
    ("confounds word", {"conf.tsv": "x\n1\n2\nabc\n" + "".join(f"{t % 5}\n" for t in range(37))},
     ["connect", "{d}/good.tsv", "--out", "{d}/o.tsv", "--options",
      '{"clean": {"regressor_table": "{d}/conf.tsv", "regressor_columns": ["x"]}}'], 1, ["conf.tsv", "line 4", "'abc'"]),
    # ---- outputs ----------------------------------------------------------------------
    ("output is the input", {}, ["connect", "{d}/good.tsv", "--out", "{d}/good.tsv"], 2, ["good.tsv", "is the input"]),
    ("output is a FIFO", {"fifo.tsv|": None}, ["connect", "{d}/good.tsv", "--out", "{d}/fifo.tsv"], 1,
     ["fifo.tsv", "not a regular file"]),
    ("output through a file", {"plain": "x"}, ["connect", "{d}/good.tsv", "--out", "{d}/plain/o.tsv"], 1,
     ["plain", "is a file, not a folder"]),
    ("output dangling link", {"dangling.tsv@": "{d}/nowhere/x.tsv"}, ["connect", "{d}/good.tsv", "--out", "{d}/dangling.tsv"], 1,
     ["dangling.tsv", "symbolic link to a missing"]),
    ("output format", {}, ["connect", "{d}/good.tsv", "--out", "{d}/o.tsv", "--format", "xlsx"], 2, ["--format", "xlsx"]),
    ("output missing", {}, ["connect", "{d}/good.tsv"], 2, ["--out"]),
    ("unknown flag", {}, ["connect", "{d}/good.tsv", "--out", "{d}/o.tsv", "--fast"], 2, ["--fast"]),
    ("two bands one file", {},
     ["connect", "{d}/good.tsv", "--out", "{d}/o.tsv", "--options",
      '{"sampling_interval": 1, "bands": {"low": [0.05, 0.15], "high": [0.2, 0.3]}}'], 2, ["--out", "{band}"]),
    # ---- images -----------------------------------------------------------------------
    ("image tiny file", {"tiny.nii": bytes(10)}, ["connect", "{d}/tiny.nii", "--labels", "{d}/tiny.nii", "--out", "{d}/o.tsv"], 1,
     ["tiny.nii"]),
    ("image not NIfTI", {"text.nii": "hello " * 100}, ["connect", "{d}/text.nii", "--labels", "{d}/text.nii", "--out", "{d}/o.tsv"],
     1, ["text.nii"]),
    ("image gzip garbage", {"g.nii.gz": b"\x1f\x8b" + bytes(40)},
     ["connect", "{d}/g.nii.gz", "--labels", "{d}/g.nii.gz", "--out", "{d}/o.tsv"], 1, ["g.nii.gz"]),
    ("image labels missing", {"bold.nii": "@image"}, ["connect", "{d}/bold.nii", "--labels", "{d}/absent.nii", "--out", "{d}/o.tsv"],
     1, ["absent.nii"]),
    ("image without labels", {"bold.nii": "@image"}, ["connect", "{d}/bold.nii", "--out", "{d}/o.tsv"], 1, ["bold.nii", "label"]),
    ("image huge grid", {"bold.nii": "@image", "grid.nii": "@huge_labels"},
     ["connect", "{d}/bold.nii", "--labels", "{d}/grid.nii", "--out", "{d}/o.tsv"], 1, ["grid.nii", "dim"]),
    ("image label names missing", {"bold.nii": "@image", "atlas.nii": "@atlas"},
     ["connect", "{d}/bold.nii", "--labels", "{d}/atlas.nii", "--label-names", "{d}/names.tsv", "--out", "{d}/o.tsv"], 1,
     ["names.tsv"]),
    ("image label names duplicate", {"bold.nii": "@image", "atlas.nii": "@atlas", "names.tsv": "1\tleft\n2\tleft\n"},
     ["connect", "{d}/bold.nii", "--labels", "{d}/atlas.nii", "--label-names", "{d}/names.tsv", "--out", "{d}/o.tsv"], 1,
     ["names.tsv", "left"]),
    ("label map without CIFTI", {}, ["connect", "{d}/good.tsv", "--label-map", "2", "--out", "{d}/o.tsv"], 2, ["--label-map"]),
    # ---- matrices (sweep) -------------------------------------------------------------
    ("matrix not square", {"ns.tsv": "name\ta\tb\na\t1\t0.5\n"}, ["sweep", "{d}/ns.tsv", "--out", "{d}/c.tsv"], 1,
     ["ns.tsv", "not square"]),
    ("matrix not symmetric", {"asym.tsv": matrix(values=[[1, 0.2, 0.3], [0.9, 1, 0.4], [0.3, 0.4, 1]])},
     ["sweep", "{d}/asym.tsv", "--out", "{d}/c.tsv"], 1, ["asym.tsv", "row 1, column 2", "not symmetric"]),
    ("matrix one node", {"one.tsv": "name\ta\na\t1\n"}, ["sweep", "{d}/one.tsv", "--out", "{d}/c.tsv"], 1,
     ["one.tsv", "at least 2 nodes"]),
    ("matrix NaN", {"nan.tsv": "name\ta\tb\na\t1\tNaN\nb\tNaN\t1\n"}, ["sweep", "{d}/nan.tsv", "--out", "{d}/c.tsv"], 1,
     ["nan.tsv", "line 2", "not finite"]),
    ("matrix duplicate names", {"dup.tsv": matrix(("p", "q", "p"))}, ["sweep", "{d}/dup.tsv", "--out", "{d}/c.tsv"], 1,
     ["dup.tsv", "line 1", "'p' appears twice"]),
    ("matrix is a folder", {"mdir.tsv/": None}, ["sweep", "{d}/mdir.tsv", "--out", "{d}/c.tsv"], 1, ["mdir.tsv", "is a folder"]),
    ("sweep max density", {}, ["sweep", "{d}/good_m.tsv", "--out", "{d}/c.tsv", "--max-density", "2"], 1, ["max_density"]),
    ("sweep max density null", {}, ["sweep", "{d}/good_m.tsv", "--out", "{d}/c.tsv", "--options", '{"max_density": null}'], 1,
     ["max_density", "leave the key out"]),
    ("sweep grid zero", {}, ["sweep", "{d}/good_m.tsv", "--out", "{d}/c.tsv", "--grid", "0"], 1, ["grid"]),
    ("sweep max density text", {}, ["sweep", "{d}/good_m.tsv", "--out", "{d}/c.tsv", "--max-density", "most"], 2,
     ["--max-density", "'most'"]),
    ("sweep options deep", {}, ["sweep", "{d}/good_m.tsv", "--out", "{d}/c.tsv", "--options", DEEP], 2, ["nested deeper"]),
    ("sweep unknown engine key", {}, ["sweep", "{d}/good_m.tsv", "--out", "{d}/c.tsv", "--options", '{"homology": {"depth": 2}}'],
     1, ["depth"]),
    ("sweep output is the input", {}, ["sweep", "{d}/good_m.tsv", "--out", "{d}/good_m.tsv"], 2, ["good_m.tsv", "is the input"]),
    ("sweep output is a folder", {"cdir/": None}, ["sweep", "{d}/good_m.tsv", "--out", "{d}/cdir"], 1, ["cdir", "is a folder"]),
    ("sweep betti text", {}, ["sweep", "{d}/good_m.tsv", "--out", "{d}/c.tsv", "--betti", "two"], 2, ["--betti", "'two'"]),
    # ---- subject ----------------------------------------------------------------------
    ("subject config not JSON", {"cfg.json": "{timeseries: x}"}, ["subject", "{d}/cfg.json", "--out", "{d}/out"], 2,
     ["cfg.json", "not valid JSON"]),
    ("subject config deep", {"cfg.json": DEEP}, ["subject", "{d}/cfg.json", "--out", "{d}/out"], 2, ["cfg.json", "nested deeper"]),
    ("subject config duplicate", {"cfg.json": '{"timeseries": "good.tsv", "timeseries": "other.tsv"}'},
     ["subject", "{d}/cfg.json", "--out", "{d}/out"], 2, ["cfg.json", "\"timeseries\" appears twice"]),
    ("subject config unknown key", {"cfg.json": '{"timeseries": "good.tsv", "id": "s1", "colour": "red"}'},
     ["subject", "{d}/cfg.json", "--out", "{d}/out"], 1, ["colour"]),
    ("subject series missing", {"cfg.json": '{"timeseries": "absent.tsv", "id": "s1"}'},
     ["subject", "{d}/cfg.json", "--out", "{d}/out"], 1, ["absent.tsv"]),
    ("subject config missing", {}, ["subject", "{d}/none.json", "--out", "{d}/out"], 1, ["none.json"]),
    ("subject out through a file", {"plain": "x", "long.tsv": series(("a", "b", "c", "d"), 120)},
     ["subject", "--timeseries", "{d}/long.tsv", "--id", "s1", "--out", "{d}/plain/out"], 1, ["plain", "is a file, not a folder"]),
    ("subject non-UTF-8 names", {"l1.tsv": series(("a", "r\xe9g", "c", "d"), 120).encode("latin-1")},
     ["subject", "--timeseries", "{d}/l1.tsv", "--id", "s1", "--out", "{d}/out"], 1, ["l1.tsv", "line 1, column 2", "UTF-8"]),
    ("subject connect deep", {}, ["subject", "--timeseries", "{d}/good.tsv", "--out", "{d}/out", "--connect", DEEP], 2,
     ["--connect", "nested deeper"]),
    # ---- cohort manifests -------------------------------------------------------------
    ("manifest missing", {}, ["cohort", "{d}/none.tsv", "--out", "{d}/out"], 1, ["none.tsv"]),
    ("manifest empty", {"m.tsv": ""}, ["cohort", "{d}/m.tsv", "--out", "{d}/out"], 1, ["m.tsv", "empty"]),
    ("manifest without group", {"m.tsv": "subject\ttimeseries\ns1\tgood.tsv\n"}, ["cohort", "{d}/m.tsv", "--out", "{d}/out"], 1,
     ["m.tsv", "line 1", "\"group\""]),
    ("manifest ragged", {"m.tsv": MANIFEST_HEAD + "s1\ta\tgood.tsv\t30\ns2\tb\tgood.tsv\n"},
     ["cohort", "{d}/m.tsv", "--out", "{d}/out"], 1, ["m.tsv", "line 3", "expected 4 cells"]),
    ("manifest duplicate subject", {"m.tsv": MANIFEST_HEAD + "s1\ta\tgood.tsv\t30\ns1\tb\tgood.tsv\t31\n"},
     ["cohort", "{d}/m.tsv", "--out", "{d}/out"], 1, ["m.tsv", "line 3", "'s1'", "appears twice"]),
    ("manifest covariate word", {"m.tsv": MANIFEST_HEAD + "s1\ta\tgood.tsv\tthirty\n"},
     ["cohort", "{d}/m.tsv", "--out", "{d}/out"], 1, ["m.tsv", "line 2", "column \"age\"", "'thirty'"]),
    ("manifest duplicate column", {"m.tsv": "subject\tgroup\ttimeseries\tage\tage\ns1\ta\tgood.tsv\t1\t2\n"},
     ["cohort", "{d}/m.tsv", "--out", "{d}/out"], 1, ["m.tsv", "line 1", "\"age\" appears twice"]),
    ("manifest series missing", {"m.tsv": MANIFEST_HEAD + "s1\ta\tabsent.tsv\t30\ns2\tb\tgood.tsv\t31\n"},
     ["cohort", "{d}/m.tsv", "--out", "{d}/out"], 1, ["m.tsv", "line 2 (subject s1)", "absent.tsv"]),
    ("cohort config deep", {"m.tsv": MANIFEST_HEAD + "s1\ta\tgood.tsv\t30\n", "deep.json": DEEP},
     ["cohort", "{d}/m.tsv", "--config", "{d}/deep.json", "--out", "{d}/out"], 1, ["deep.json", "nested deeper"]),
    ("cohort config duplicate", {"m.tsv": MANIFEST_HEAD + "s1\ta\tgood.tsv\t30\n", "dup.json": '{"connect": {}, "connect": {}}'},
     ["cohort", "{d}/m.tsv", "--config", "{d}/dup.json", "--out", "{d}/out"], 1, ["dup.json", "\"connect\" appears twice"]),
    ("cohort workers text", {"m.tsv": MANIFEST_HEAD + "s1\ta\tgood.tsv\t30\n"},
     ["cohort", "{d}/m.tsv", "--workers", "many", "--out", "{d}/out"], 2, ["--workers", "'many'"]),
    # ---- compare and report -----------------------------------------------------------
    ("compare not a folder", {}, ["compare", "{d}/good.tsv"], 1, ["good.tsv", "not a folder"]),
    ("compare empty folder", {"empty/": None}, ["compare", "{d}/empty"], 1, ["empty", "no finished subject"]),
    ("compare broken document", {"res/sub-s1_topology.json": "{\"subject\": "}, ["compare", "{d}/res"], 1,
     ["sub-s1_topology.json", "not valid JSON"]),
    ("compare document duplicate key", {"res/sub-s1_topology.json": '{"subject": "s1", "subject": "s2"}'},
     ["compare", "{d}/res"], 1, ["sub-s1_topology.json", "\"subject\" appears twice"]),
    ("compare document deep", {"res/sub-s1_topology.json": DEEP}, ["compare", "{d}/res"], 1,
     ["sub-s1_topology.json", "nested deeper"]),
    ("compare options deep", {"empty/": None}, ["compare", "{d}/empty", "--options", DEEP], 2, ["--options", "nested deeper"]),
    ("compare options unknown", {"empty/": None}, ["compare", "{d}/empty", "--options", '{"tails": 2}'], 1, ["tails"]),
    ("report empty folder", {"empty/": None}, ["report", "{d}/empty"], 1, ["empty"]),
    # ---- simulate ---------------------------------------------------------------------
    ("simulate unknown option", {}, ["simulate", "--out", "{d}/sim", "--options", '{"subjcts": 4}'], 1, ["subjcts"]),
    ("simulate zero regions", {}, ["simulate", "--out", "{d}/sim", "--regions", "0"], 1, ["regions"]),
    ("simulate layout", {}, ["simulate", "--out", "{d}/sim", "--layout", "zip"], 2, ["--layout", "'zip'"]),
    ("simulate options deep", {}, ["simulate", "--out", "{d}/sim", "--options", DEEP], 2, ["--options", "nested deeper"]),
    ("simulate into a file", {"plain": "x"}, ["simulate", "--out", "{d}/plain"], 1, ["plain"]),
    ("unknown command", {}, ["analyse", "{d}/good.tsv"], 2, ["analyse"]),
]


class BadInputs(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        import nibabel as nib
        import numpy as np
        cls.shared = tempfile.mkdtemp()
        rng = np.random.default_rng(11)
        data = rng.standard_normal((4, 4, 3, 20)).astype(np.float32)
        labels = np.zeros((4, 4, 3), np.int16)
        labels[:2], labels[2:] = 1, 2
        blobs = {}
        for name, image in (("image", nib.Nifti1Image(data, np.eye(4))), ("atlas", nib.Nifti1Image(labels, np.eye(4)))):
            path = os.path.join(cls.shared, name + ".nii")
            nib.save(image, path)
            with open(path, "rb") as f:
                blobs[name] = f.read()
        huge = bytearray(blobs["atlas"])
        struct.pack_into("<8h", huge, 40, 3, 32767, 32767, 32767, 1, 1, 1, 1)
        blobs["huge_labels"] = bytes(huge[:480])
        with open(os.path.join(os.environ["CRITPLEX_SOURCE_DIR"], "tests/fuzz/corpus/tables/regression_npy_fortran_blank"),
                  "rb") as f:
            blobs["npy_blank"] = f.read()[1:]  # the harness's first byte picks the format
        cls.blobs = blobs

    @classmethod
    def tearDownClass(cls):
        shutil.rmtree(cls.shared)

    def make_files(self, d, files):
        for name, content in {**GOOD, **files}.items():
            path = os.path.join(d, name.rstrip("/|@"))
            os.makedirs(os.path.dirname(path), exist_ok=True)
            if name.endswith("/"):
                os.makedirs(path, exist_ok=True)
            elif name.endswith("|"):
                os.mkfifo(path)
            elif name.endswith("@"):
                os.symlink(content.replace("{d}", d), path)
            else:
                if isinstance(content, str) and content.startswith("@"):
                    content = self.blobs[content[1:]]
                with open(path, "wb") as f:
                    f.write(content if isinstance(content, bytes) else content.encode())

    def snapshot(self, d):
        found = set()
        for root, dirs, files in os.walk(d):
            for n in dirs + files:
                found.add(os.path.relpath(os.path.join(root, n), d))
        return found

    def test_catalogue(self):
        self.assertGreaterEqual(len(CASES), 80)
        peak_kb = 0
        for name, files, args, code, needles in CASES:
            with self.subTest(case=name), tempfile.TemporaryDirectory() as d, tempfile.TemporaryDirectory() as m:
                self.make_files(d, files)
                before = self.snapshot(d)
                argv = [a.replace("{d}", d) for a in args]
                memory = os.path.join(m, "time.txt")
                p = subprocess.run([TIME, "-v", "-o", memory, CLI, *argv], capture_output=True, text=True, timeout=120,
                                   cwd=d)
                self.assertEqual(p.returncode, code, p.stderr[-2000:])
                for needle in needles:
                    self.assertIn(needle.replace("{d}", d), p.stderr)
                self.assertNotIn("internal error", p.stderr)
                self.assertLess(len(p.stderr), 2000, "the message must stay short")
                self.assertEqual(self.snapshot(d) - before, set(), "no output or temporary file may be left")
                with open(memory) as f:
                    kb = [int(l.split(":")[1]) for l in f if "Maximum resident set size" in l]
                self.assertEqual(len(kb), 1)
                self.assertLess(kb[0], MEMORY_LIMIT_KB)
                peak_kb = max(peak_kb, kb[0])
        print("\n%d bad inputs refused; largest peak resident size %.1f MB" % (len(CASES), peak_kb / 1024.0))


if __name__ == "__main__":
    unittest.main()
