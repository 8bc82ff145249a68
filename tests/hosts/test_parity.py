"""Every host runs the same small invented cohort and gets the same group-test table as
`critplex cohort` + `critplex compare` run here, in the same test (not stored values).

    test_parity.py PREFIX HOSTS_DIR
PREFIX: the scratch install; HOSTS_DIR: where run_hosts.sh put the Python virtual
environment (python/venv), the R library (r/library) and the MEX file (octave/).
Julia is not run (not packaged for this Debian): its module is checked statically.
"""
import math
import os
import shutil
import subprocess
import sys

prefix, hosts = (os.path.abspath(a) for a in sys.argv[1:3])
here = os.path.dirname(os.path.abspath(__file__))
work = os.path.join(hosts, "parity")
shutil.rmtree(work, ignore_errors=True)
os.makedirs(work)
cli = os.path.join(prefix, "bin", "critplex")
study = os.path.join(work, "study")
manifest, config = os.path.join(study, "manifest.tsv"), os.path.join(study, "cohort_config.json")


def run(args, **kw):
    p = subprocess.run(args, capture_output=True, text=True, cwd=work, **kw)
    if p.returncode != 0:
        sys.exit("failed: %s\n%s\n%s" % (" ".join(args), p.stdout, p.stderr))
    return p.stdout


def read_table(path):
    with open(path) as f:
        rows = [line.rstrip("\n").split("\t") for line in f if line.strip()]
    return rows[0], rows[1:]


def same_cell(a, b):
    missing = ("n/a", "NA", "NaN", "")
    if a in missing or b in missing:
        return a in missing and b in missing
    if a.lower() in ("true", "false") or b.lower() in ("true", "false"):
        return a.lower() == b.lower()
    try:
        x, y = float(a), float(b)
    except ValueError:
        return a == b
    return x == y or math.isclose(x, y, rel_tol=1e-12, abs_tol=1e-300)


# The reference: the command line, in this run.
run([cli, "simulate", "--out", study, "--subjects", "4", "--regions", "12", "--frames", "160", "--seed", "5"])
run([cli, "cohort", manifest, "--config", config, "--out", os.path.join(work, "cli")])
run([cli, "compare", os.path.join(work, "cli"), "--covariates", "age"])
header, rows = read_table(os.path.join(work, "cli", "group_tests.tsv"))
assert len(rows) >= 5 and any(r[header.index("p_value")] not in ("n/a", "NA") for r in rows), rows
with open(os.path.join(work, "cli", "group_tests.tsv"), "rb") as f:
    cli_bytes = f.read()

env = {k: v for k, v in os.environ.items() if k not in ("CRITPLEX_LIBRARY", "PYTHONPATH", "LD_LIBRARY_PATH")}
hosts_run = {
    "python": [os.path.join(hosts, "python", "venv", "bin", "python"), os.path.join(here, "parity", "host_python.py")],
    "r": ["Rscript", os.path.join(here, "parity", "host_r.R")],
    "octave": None,
}
failures = []
for host, command in hosts_run.items():
    out = os.path.join(work, host)
    table = os.path.join(work, host + "_tests.tsv")
    if host == "octave":
        paths = "addpath('%s'); addpath('%s'); addpath('%s');" % (
            os.path.join(here, "parity"), os.path.join(prefix, "share", "critplex", "matlab"), os.path.join(hosts, "octave"))
        command = ["octave", "--no-gui", "--no-window-system", "--quiet", "--eval",
                   "%s host_octave('%s', '%s', '%s', '%s')" % (paths, manifest, config, out, table)]
    else:
        command = command + [manifest, config, out, table]
    host_env = dict(env, R_LIBS=os.path.join(hosts, "r", "library"))
    print(run(command, env=host_env).strip())
    with open(os.path.join(out, "group_tests.tsv"), "rb") as f:
        if f.read() != cli_bytes:
            failures.append("%s: its group_tests.tsv differs from the command line's" % host)
    h_header, h_rows = read_table(table)
    missing = [c for c in header if c not in h_header]
    if missing:
        failures.append("%s: the table lacks the columns %s" % (host, missing))
        continue
    if len(h_rows) != len(rows):
        failures.append("%s: %d rows, the command line %d" % (host, len(h_rows), len(rows)))
        continue
    for i, (row, h_row) in enumerate(zip(rows, h_rows)):
        for j, name in enumerate(header):
            if not same_cell(row[j], h_row[h_header.index(name)]):
                failures.append("%s: row %d column %s: %r, the command line %r" % (host, i + 1, name,
                                                                                 h_row[h_header.index(name)], row[j]))
if failures:
    sys.exit("parity failed:\n  " + "\n  ".join(failures))
print("parity: python, R and octave give the command line's group-test table (%d tests x %d columns); "
      "julia is checked statically only" % (len(rows), len(header)))
