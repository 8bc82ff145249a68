#!/usr/bin/python3
"""Whole-subject benchmark: `critplex subject` on one invented subject (critplex simulate,
default 400 regions x 1200 frames), band-pass 0.01-0.1 Hz and Ledoit-Wolf, chi to
density 0.5 on a 0.005 grid, Betti curves to dimension 2 up to 0.2 and curvature up to
0.15 (each engine over its own range), with each null model. Prints wall and processor
time and peak memory (/usr/bin/time) per case, and each null's cost per draw relative to
the phase-randomised surrogates of the same run. The per-grid-point `rewire` null runs
only a few draws (it is tens of seconds per draw at 400 regions); its per-draw cost is
what is compared.

    tests/bench/subject.py BUILD_DIR [REGIONS [FRAMES]]

Not run by ctest; the measured table is in docs/performance.md."""
import json
import os
import subprocess
import sys
import tempfile


def timed(cmd):
    r = subprocess.run(["/usr/bin/time", "-f", "%e %U %S %M"] + cmd, capture_output=True, text=True)
    if r.returncode != 0:
        raise SystemExit(f"{' '.join(cmd)} failed:\n{r.stderr}")
    wall, user, system, kb = r.stderr.strip().splitlines()[-1].split()
    return float(wall), float(user) + float(system), int(kb) / 1024


def main():
    build = sys.argv[1] if len(sys.argv) > 1 else "build"
    regions = int(sys.argv[2]) if len(sys.argv) > 2 else 400
    frames = int(sys.argv[3]) if len(sys.argv) > 3 else 1200
    cli = os.path.join(build, "plugins", "cli", "critplex")
    cases = [("none", 0, None), ("phase_multivariate", 100, None), ("rewire_nested", 100, None),
             ("rewire_nested", 100, 0.3), ("rewire_nested", 100, 0.2), ("rewire", 3, None)]
    with tempfile.TemporaryDirectory() as tmp:
        subprocess.run([cli, "simulate", "--out", os.path.join(tmp, "s"), "--subjects", "1", "--regions",
                        str(regions), "--frames", str(frames), "--seed", "4"], check=True, capture_output=True)
        series = sorted(os.listdir(os.path.join(tmp, "s", "timeseries")))[0]
        rows = []
        for model, count, limit in cases:
            null = {"model": model, "count": max(count, 2), "seed": 3}
            if limit:
                null["max_density"] = limit
            config = {"timeseries": os.path.join(tmp, "s", "timeseries", series),
                      "connect": {"method": "ledoit_wolf", "sampling_interval": 0.8,
                                  "filter": {"design": "butterworth", "low_hz": 0.01, "high_hz": 0.1, "order": 4}},
                      "sweep": {"max_density": 0.5, "grid": 0.005, "cliques": {"chi_only": True},
                                "homology": {"max_dimension": 2, "max_density": 0.2},
                                "curvature": {"max_density": 0.15}},
                      "null": null if model != "none" else {"model": "none"}}
            path = os.path.join(tmp, "config.json")
            with open(path, "w") as f:
                json.dump(config, f)
            wall, cpu, mb = timed([cli, "subject", path, "--out", os.path.join(tmp, "out"), "--id", "bench"])
            rows.append((model, count, limit, wall, cpu, mb))
    base = rows[0][4]
    per_draw = {(m, l): (cpu - base) / c for m, c, l, w, cpu, mb in rows if c}
    phase = per_draw[("phase_multivariate", None)]
    print(f"subject: {regions} regions x {frames} frames")
    print(f"{'null':<20} {'draws':>5} {'range':>6} {'wall s':>8} {'cpu s':>8} {'peak MB':>8} {'cpu/draw':>9} {'/phase':>7}")
    for m, c, l, w, cpu, mb in rows:
        d = per_draw.get((m, l))
        extra = f"{d:9.3f} {d / phase:7.1f}" if d is not None else f"{'-':>9} {'-':>7}"
        print(f"{m:<20} {c:>5} {str(l or '-'):>6} {w:8.2f} {cpu:8.2f} {mb:8.1f} {extra}")


if __name__ == "__main__":
    main()
