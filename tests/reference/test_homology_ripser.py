#!/usr/bin/python3
"""Barcodes and Betti curves of `critplex sweep --betti K` against outside sources:

- the `ripser` command (Debian package ripser): barcodes as multisets in every
  dimension, on random matrices, brain-like ones, matrices with ties and nitime's
  real fMRI series; the filtration is given to ripser as edge ranks (a lower-distance
  matrix, --threshold at the last rank), so no rounding enters;
- gudhi (Debian python3-gudhi): persistence of the same flag filtration on small
  matrices, and simplex counts for the Euler-Poincare check
  sum_k (-1)^k beta_k = chi (docs/methods.md) where every dimension present is computed.

The edge order is rebuilt here from docs/methods.md ("Filtration": decreasing weight,
ties broken by (i, j)), independently of the library.
"""
import json
import os
import subprocess
import tempfile
import unittest

import numpy as np

from rank_filtration import edge_order, gudhi_tree, parse_intervals, write_rank_matrix

CLI = os.environ.get("CRITPLEX_CLI")
NITIME_CSV = "/usr/lib/python3/dist-packages/nitime/data/fmri_timeseries.csv"


def ripser_bars(n, iu, ju, dim, tmp):
    """reference: the ripser command (Debian package ripser), lower-distance ranks."""
    path = os.path.join(tmp, "ranks.txt")
    m = write_rank_matrix(n, iu, ju, path)
    out = subprocess.run(["ripser", "--format", "lower-distance", "--threshold", str(m), "--dim", str(dim), path],
                         capture_output=True, text=True, check=True).stdout
    return parse_intervals(out)


def gudhi_bars(n, iu, ju, dim):
    """reference: gudhi SimplexTree.persistence over Z/2 (Debian python3-gudhi)."""
    st = gudhi_tree(n, iu, ju, dim)
    st.persistence(homology_coeff_field=2, persistence_dim_max=True)
    bars = []
    for k in range(dim + 1):
        for b, d in st.persistence_intervals_in_dimension(k):
            bars.append((k, int(b), None if np.isinf(d) else int(d)))
    return sorted(bars, key=repr)


class Sweep:
    """Runs `critplex sweep MATRIX --betti K` and keeps the JSON and the TSV."""

    def __init__(self, matrix, dim, tmp, max_density=1.0, extra=None):
        path = os.path.join(tmp, "matrix.tsv")
        np.savetxt(path, matrix, delimiter="\t", fmt="%.17g")
        base = [CLI, "sweep", path, "--betti", str(dim), "--grid", "every", "--max-density", repr(max_density)]
        if extra:
            base += extra
        for fmt in ("json", "tsv"):
            out = os.path.join(tmp, "out." + fmt)
            p = subprocess.run(base + ["--out", out], capture_output=True, text=True)
            if p.returncode != 0:
                raise AssertionError(f"critplex sweep failed: {p.stderr}")
            with open(out) as f:
                text = f.read()
            if fmt == "json":
                self.json = json.loads(text)
            else:
                lines = [line.split("\t") for line in text.strip().split("\n")]
                self.header, self.rows = lines[0], lines[1:]
        self.homology = self.json["homology"]

    def bars(self):
        return sorted(((b["dimension"], b["birth_rank"], b["death_rank"]) for b in self.homology["bars"]), key=repr)

    def column(self, name):
        c = self.header.index(name)
        return [int(r[c]) for r in self.rows]


def brain_like(n, frames, seed):
    """Invented demo-style model: 7 modules with AR(1) factors, a global factor, noise."""
    rng = np.random.default_rng(seed)
    module = rng.integers(0, 7, size=n)
    factors = np.zeros((frames, 8))
    shocks = rng.standard_normal((frames, 8))
    for t in range(1, frames):
        factors[t] = 0.8 * factors[t - 1] + shocks[t]
    series = rng.uniform(0.4, 1.0, size=n) * factors[:, module] + 0.3 * factors[:, [7]]
    series += rng.standard_normal((frames, n))
    return np.corrcoef(series.T)


@unittest.skipUnless(CLI, "CRITPLEX_CLI is not set")
class HomologyAgainstRipser(unittest.TestCase):
    def compare(self, matrix, dim, max_density=1.0):
        with tempfile.TemporaryDirectory() as tmp:
            sweep = Sweep(matrix, dim, tmp, max_density)
            iu, ju, _ = edge_order(matrix, max_density)
            # The grid stops at max_density; the filtration may hold the rest of a tie group.
            self.assertLessEqual(sweep.json["grid"][-1]["edges"], len(iu))
            # reference: the ripser command (Debian package ripser)
            self.assertEqual(sweep.bars(), ripser_bars(matrix.shape[0], iu, ju, dim, tmp))
            return sweep

    def test_random_matrices(self):
        rng = np.random.default_rng(11)
        for trial in range(12):
            n = int(rng.integers(12, 40))
            a = rng.uniform(-0.3, 1.0, size=(n, n))
            m = (a + a.T) / 2
            np.fill_diagonal(m, 1.0)
            with self.subTest(trial=trial, n=n):
                self.compare(m, 1 + trial % 3, max_density=[1.0, 0.5, 0.3][trial % 3])

    def test_brain_like_matrices(self):
        for seed, (n, rho, dim) in enumerate([(60, 0.3, 2), (80, 0.15, 3), (100, 0.2, 2)]):
            with self.subTest(n=n, rho=rho, dim=dim):
                self.compare(brain_like(n, 300, seed), dim, rho)

    def test_matrices_with_ties(self):
        rng = np.random.default_rng(5)
        for trial in range(6):
            n = 25
            a = np.round(rng.uniform(0, 1, size=(n, n)), 1)  # ten levels: many ties
            m = np.triu(a, 1) + np.triu(a, 1).T
            np.fill_diagonal(m, 1.0)
            with self.subTest(trial=trial):
                sweep = self.compare(m, 2, 0.6)
                # Densities of bars are taken after the whole tie group (docs/methods.md).
                _, _, w = edge_order(m, 0.6)
                pairs = n * (n - 1) // 2

                def after_group(rank):
                    end = rank
                    while end < len(w) and w[end] == w[rank - 1]:
                        end += 1
                    return end / pairs

                for b in sweep.homology["bars"]:
                    if b["birth_rank"] > 0:
                        self.assertEqual(b["birth_density"], after_group(b["birth_rank"]))
                    if not b["essential"]:
                        self.assertEqual(b["death_density"], after_group(b["death_rank"]))

    @unittest.skipUnless(os.path.exists(NITIME_CSV), "nitime's fMRI series not installed")
    def test_nitime_fmri_series(self):
        # reference data: nitime's data/fmri_timeseries.csv (Debian python3-nitime);
        # the first three columns are nuisance signals and are left out.
        data = np.genfromtxt(NITIME_CSV, delimiter=",", names=True)
        series = np.column_stack([data[name] for name in data.dtype.names[3:]])
        m = np.corrcoef(series.T)
        for dim, rho in [(2, 1.0), (3, 0.5)]:
            with self.subTest(dim=dim, rho=rho):
                self.compare(m, dim, rho)


@unittest.skipUnless(CLI, "CRITPLEX_CLI is not set")
class HomologyAgainstGudhi(unittest.TestCase):
    def test_small_matrices_and_euler_poincare(self):
        rng = np.random.default_rng(3)
        for trial in range(6):
            n = 14
            a = rng.uniform(0, 1, size=(n, n))
            m = (a + a.T) / 2
            np.fill_diagonal(m, 1.0)
            dim = 3
            with self.subTest(trial=trial), tempfile.TemporaryDirectory() as tmp:
                rho = 0.35 + 0.05 * trial
                sweep = Sweep(m, dim, tmp, rho)
                iu, ju, _ = edge_order(m, rho)
                # reference: gudhi SimplexTree.persistence (Debian python3-gudhi)
                self.assertEqual(sweep.bars(), gudhi_bars(n, iu, ju, dim))
                # Euler-Poincare against gudhi's simplex counts (all dimensions present).
                st = gudhi_tree(n, iu, ju, n)  # the whole flag complex
                betti = [sweep.column(f"betti_{k}") for k in range(dim + 1)]
                checked = 0
                for g, point in enumerate(sweep.json["grid"]):
                    counts = {}
                    for simplex, value in st.get_filtration():
                        if value <= point["edges"]:
                            counts[len(simplex) - 1] = counts.get(len(simplex) - 1, 0) + 1
                    if max(counts) > dim:
                        continue
                    chi = sum((-1) ** k * c for k, c in counts.items())
                    self.assertEqual(sum((-1) ** k * betti[k][g] for k in range(dim + 1)), chi)
                    checked += 1
                self.assertGreater(checked, 5)


@unittest.skipUnless(CLI, "CRITPLEX_CLI is not set")
class BettiCurvesAndOutputs(unittest.TestCase):
    def test_curves_match_ripser_bars_on_the_grid(self):
        m = brain_like(50, 300, 9)
        with tempfile.TemporaryDirectory() as tmp:
            sweep = Sweep(m, 2, tmp, 0.4)
            iu, ju, _ = edge_order(m, 0.4)
            bars = ripser_bars(50, iu, ju, 2, tmp)  # reference: the ripser command
            for k in range(3):
                curve = sweep.column(f"betti_{k}")
                self.assertEqual(curve, sweep.homology["betti"][k])
                for g, point in enumerate(sweep.json["grid"]):
                    e = point["edges"]
                    alive = sum(1 for d, b, x in bars if d == k and b <= e and (x is None or x > e))
                    self.assertEqual(curve[g], alive)

    def test_bar_units(self):
        m = brain_like(30, 200, 4)
        with tempfile.TemporaryDirectory() as tmp:
            sweep = Sweep(m, 1, tmp, 0.5)
            iu, ju, w = edge_order(m, 0.5)
            pairs = 30 * 29 // 2
            for b in sweep.homology["bars"]:
                if b["birth_rank"] > 0:
                    self.assertEqual(b["birth_threshold"], w[b["birth_rank"] - 1])
                    self.assertAlmostEqual(b["birth_density"], b["birth_rank"] / pairs)  # no ties here
                if b["essential"]:
                    self.assertIsNone(b["death_rank"])
                else:
                    self.assertEqual(b["death_threshold"], w[b["death_rank"] - 1])

    def test_bad_betti_argument_is_refused(self):
        with tempfile.TemporaryDirectory() as tmp:
            path = os.path.join(tmp, "m.tsv")
            np.savetxt(path, np.eye(4) + 0.5, delimiter="\t")
            out = os.path.join(tmp, "out.json")
            p = subprocess.run([CLI, "sweep", path, "--betti", "-1", "--out", out], capture_output=True, text=True)
            self.assertNotEqual(p.returncode, 0)
            self.assertIn("max_dimension", p.stderr)
            self.assertFalse(os.path.exists(out))


if __name__ == "__main__":
    unittest.main()
