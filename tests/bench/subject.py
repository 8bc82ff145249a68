#!/usr/bin/python3
"""Whole-subject benchmark: `critplex subject` on one invented subject (critplex simulate,
default 400 regions x 1200 frames), band-pass 0.01-0.1 Hz and Ledoit-Wolf, with the
DEFAULT sweep (no "sweep" section: each engine over its default range, see
docs/options.md), then with each null model at 100 draws. One more row adds Betti curves
to dimension 2 and node curvature at the transitions ("at": "transitions"), each at its
default range. Prints wall and processor time and peak memory (/usr/bin/time) per case,
and each null's processor time per draw relative to the phase-randomised surrogates of
the same run. The per-grid-point `rewire` null runs only a few draws (tens of seconds per
draw); its per-draw cost is what is compared.

    tests/bench/subject.py BUILD_DIR [REGIONS [FRAMES]] [--threads T] [--skip MODEL ...]

Not run by ctest; the measured tables are in docs/performance.md."""
import argparse
import json
import os
import subprocess
import tempfile


def timed(cmd):
    r = subprocess.run(["/usr/bin/time", "-f", "%e %U %S %M"] + cmd, capture_output=True, text=True)
    if r.returncode != 0:
        raise SystemExit(f"{' '.join(cmd)} failed:\n{r.stderr}")
    wall, user, system, kb = r.stderr.strip().splitlines()[-1].split()
    return float(wall), float(user) + float(system), int(kb) / 1024


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("build", nargs="?", default="build")
    ap.add_argument("regions", nargs="?", type=int, default=400)
    ap.add_argument("frames", nargs="?", type=int, default=1200)
    ap.add_argument("--threads", type=int, default=0, help="cliques.threads (0 = every core)")
    ap.add_argument("--skip", nargs="*", default=[], help="null models to leave out")
    a = ap.parse_args()
    cli = os.path.join(a.build, "plugins", "cli", "critplex")
    # (label, null model, draws, extra sweep keys)
    cases = [("default, no null", "none", 0, {}),
             ("+ Betti 0-2, curvature at transitions", "none", 0,
              {"homology": {"max_dimension": 2}, "curvature": {"at": "transitions"}}),
             ("phase_multivariate", "phase_multivariate", 100, {}),
             ("iaaft", "iaaft", 100, {}),
             ("rewire_nested", "rewire_nested", 100, {}),
             ("rewire (per grid point)", "rewire", 3, {})]
    cases = [c for c in cases if c[1] not in a.skip]
    with tempfile.TemporaryDirectory() as tmp:
        subprocess.run([cli, "simulate", "--out", os.path.join(tmp, "s"), "--subjects", "1", "--regions",
                        str(a.regions), "--frames", str(a.frames), "--seed", "4"], check=True, capture_output=True)
        series = sorted(os.listdir(os.path.join(tmp, "s", "timeseries")))[0]
        rows = []
        for label, model, count, extra in cases:
            config = {"timeseries": os.path.join(tmp, "s", "timeseries", series),
                      "connect": {"method": "ledoit_wolf", "sampling_interval": 0.8,
                                  "filter": {"design": "butterworth", "low_hz": 0.01, "high_hz": 0.1, "order": 4}},
                      "null": {"model": model, "count": max(count, 2), "seed": 3} if model != "none"
                      else {"model": "none"}}
            sweep = dict(extra)
            if a.threads:
                sweep["cliques"] = {"threads": a.threads}
            if sweep:
                config["sweep"] = sweep
            path = os.path.join(tmp, "config.json")
            with open(path, "w") as f:
                json.dump(config, f)
            wall, cpu, mb = timed([cli, "subject", path, "--out", os.path.join(tmp, "out"), "--id", "bench"])
            rows.append((label, model, count, wall, cpu, mb))
    base = rows[0][4]
    per_draw = {label: (cpu - base) / c for label, m, c, w, cpu, mb in rows if c}
    phase = per_draw.get("phase_multivariate")
    print(f"subject: {a.regions} regions x {a.frames} frames, threads {a.threads or 'all'}")
    print(f"{'case':<38} {'draws':>5} {'wall s':>8} {'cpu s':>8} {'peak MB':>8} {'cpu/draw':>9} {'/phase':>7}")
    for label, m, c, w, cpu, mb in rows:
        d = per_draw.get(label)
        extra = f"{d:9.3f} {d / phase:7.1f}" if d is not None and phase else f"{'-':>9} {'-':>7}"
        print(f"{label:<38} {c or '-':>5} {w:8.2f} {cpu:8.2f} {mb:8.1f} {extra}")


if __name__ == "__main__":
    main()
