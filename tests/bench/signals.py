#!/usr/bin/python3
"""Speed of the signals stage against the Python stack (numpy, scipy.signal, sklearn; Debian
packages) on the same inputs, in one run.

    /usr/bin/python3 tests/bench/signals.py BUILD_DIR [--quick] [--meg-seconds S] [--repeats R]

fMRI case: N = 400 regions, T = 1200 frames, 24 confounds, TR 0.72 s: confound regression
(least squares with intercept) + Butterworth band-pass 0.01-0.1 Hz (order 4, forward-backward)
+ Ledoit-Wolf turned into correlation. Ours: bench_signals; Python: numpy.linalg.lstsq,
scipy.signal.butter + sosfiltfilt, sklearn.covariance.LedoitWolf. Results are cross-checked.
MEG case: N = 100 channels at 1000 Hz for 300 s, 5 bands (delta..gamma, common practice):
band-pass + analytic signal + wPLI per band; ours on the full length (throughput), and both
on the first 20 s for a ratio (the numpy wPLI loop over pairs is slow).
Inputs are invented random series (seeded); speed does not depend on their content.
Prints wall time of the steps (best of R), peak memory of each process (/usr/bin/time -v),
and the ratios ours / Python. Not run by ctest.
"""
import json
import os
import re
import subprocess
import sys
import tempfile

import numpy as np

PY_FMRI = r"""
import json, sys, time
import numpy as np
from scipy import signal
from sklearn.covariance import LedoitWolf
x = np.load(sys.argv[1]); c = np.load(sys.argv[2]); tr = float(sys.argv[3]); lo, hi = float(sys.argv[4]), float(sys.argv[5])
best = None
for _ in range(int(sys.argv[6])):
    t0 = time.perf_counter()
    d = np.column_stack([np.ones(len(c)), c])
    resid = x - d @ np.linalg.lstsq(d, x, rcond=None)[0]
    t1 = time.perf_counter()
    sos = signal.butter(4, [lo, hi], btype="bandpass", fs=1.0 / tr, output="sos")
    f = signal.sosfiltfilt(sos, resid, axis=0)
    t2 = time.perf_counter()
    lw = LedoitWolf().fit(f)
    s = np.sqrt(np.diag(lw.covariance_)); r = lw.covariance_ / np.outer(s, s)
    t3 = time.perf_counter()
    run = {"regress": t1 - t0, "filter": t2 - t1, "ledoit_wolf": t3 - t2, "total": t3 - t0,
           "shrinkage": lw.shrinkage_, "sum": float(r.sum())}
    if best is None or run["total"] < best["total"]:
        best = run
print(json.dumps(best))
"""

PY_MEG = r"""
import json, sys, time
import numpy as np
from scipy import signal
x = np.load(sys.argv[1]); fs = float(sys.argv[2])
bands = [tuple(map(float, b.split(":"))) for b in sys.argv[3].split(",")]
t0 = time.perf_counter(); total = 0.0
for lo, hi in bands:
    z = signal.hilbert(signal.sosfiltfilt(signal.butter(4, [lo, hi], btype="bandpass", fs=fs, output="sos"), x, axis=0), axis=0)
    n = z.shape[1]; w = np.eye(n)
    for i in range(n):
        im = np.imag(z[:, [i]] * np.conj(z[:, i + 1:]))
        w[i, i + 1:] = np.abs(im.mean(0)) / np.maximum(np.abs(im).mean(0), 1e-300)
    total += float((np.triu(w, 1) * 2).sum() + n)
print(json.dumps({"total": time.perf_counter() - t0, "sum": total}))
"""


def timed(command):
    """Runs command under /usr/bin/time -v; returns (stdout JSON, peak MB)."""
    done = subprocess.run(["/usr/bin/time", "-v"] + command, capture_output=True, text=True)
    if done.returncode != 0:
        sys.exit("failed: %s\n%s" % (" ".join(command), done.stderr))
    peak = re.search(r"Maximum resident set size \(kbytes\): (\d+)", done.stderr)
    return json.loads(done.stdout.strip().splitlines()[-1]), int(peak.group(1)) / 1024.0 if peak else float("nan")


def main():
    args = sys.argv[1:]
    if not args:
        sys.exit(__doc__)
    build = args[0]
    quick = "--quick" in args
    meg_seconds = float(args[args.index("--meg-seconds") + 1]) if "--meg-seconds" in args else (30.0 if quick else 300.0)
    repeats = int(args[args.index("--repeats") + 1]) if "--repeats" in args else 3
    ours = os.path.join(build, "tests", "bench", "bench_signals")
    rng = np.random.default_rng(2026)
    with tempfile.TemporaryDirectory() as tmp:
        # --- fMRI-like
        n, t, k, tr = 400, 1200, 24, 0.72
        x = rng.standard_normal((t, n)) + 0.3 * rng.standard_normal((t, 1))
        c = rng.standard_normal((t, k))
        xs, cs = os.path.join(tmp, "x.npy"), os.path.join(tmp, "c.npy")
        np.save(xs, x)
        np.save(cs, c)
        best = None
        for _ in range(repeats):
            run, mem = timed([ours, "fmri", xs, cs, str(tr), "0.01", "0.1"])
            if best is None or run["total"] < best[0]["total"]:
                best = (run, mem)
        (o, omem) = best
        p, pmem = timed([sys.executable, "-c", PY_FMRI, xs, cs, str(tr), "0.01", "0.1", str(repeats)])
        agree = abs(o["shrinkage"] - p["shrinkage"]) < 1e-8 and abs(o["sum"] - p["sum"]) < 1e-6 * abs(p["sum"])
        input_mb = x.nbytes / 2 ** 20
        print("fMRI N=%d T=%d, %d confounds, TR %.2f s: regression + band-pass 0.01-0.1 Hz + Ledoit-Wolf" % (n, t, k, tr))
        print("  %-10s %9s %9s %9s %9s %10s" % ("", "regress", "filter", "ledoit_w", "total s", "peak MB"))
        print("  %-10s %9.4f %9.4f %9.4f %9.4f %10.1f" % ("critplex", o["regress"], o["filter"], o["ledoit_wolf"], o["total"], omem))
        print("  %-10s %9.4f %9.4f %9.4f %9.4f %10.1f" % ("python", p["regress"], p["filter"], p["ledoit_wolf"], p["total"], pmem))
        print("  ratio critplex / python: %.3f (target <= 0.3); results agree: %s; input %.1f MB, "
              "our peak / input %.1f" % (o["total"] / p["total"], agree, input_mb, omem / input_mb))

        # --- MEG-like
        fs, channels = 1000.0, 100
        bands = "1:4,4:8,8:13,13:30,30:80"
        frames = int(meg_seconds * fs)
        m = rng.standard_normal((frames, channels))
        ms = os.path.join(tmp, "m.npy")
        np.save(ms, m)
        o, omem = timed([ours, "meg", ms, str(fs), bands])
        rate = channels * frames * 5 / o["total"]
        print("MEG N=%d at %.0f Hz for %.0f s, 5 bands: band-pass + analytic signal + wPLI" % (channels, fs, meg_seconds))
        print("  critplex: filter %.2f s, analytic %.2f s, wPLI %.2f s, total %.2f s, peak %.0f MB (input %.0f MB)"
              % (o["filter"], o["analytic"], o["wpli"], o["total"], omem, m.nbytes / 2 ** 20))
        print("  throughput: %.2f million samples x bands per second; %.1f x real time"
              % (rate / 1e6, meg_seconds / o["total"]))
        short = os.path.join(tmp, "m20.npy")
        np.save(short, m[:20000])
        o2, _ = timed([ours, "meg", short, str(fs), bands])
        p2, _ = timed([sys.executable, "-c", PY_MEG, short, str(fs), bands])
        print("  first 20 s, both: critplex %.2f s, python %.2f s, ratio %.3f, results agree: %s"
              % (o2["total"], p2["total"], o2["total"] / p2["total"], abs(o2["sum"] - p2["sum"]) < 1e-6 * abs(p2["sum"])))


if __name__ == "__main__":
    main()
