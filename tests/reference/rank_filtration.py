"""Shared by the homology reference test and the homology benchmark: the filtration's
edge order, the rank matrix given to the ripser command (Debian package ripser), the
parsing of its printed intervals, and the same ranks as a gudhi SimplexTree (Debian
python3-gudhi), so both compare against the references the same way."""
import re

import numpy as np


def edge_order(matrix, max_density=1.0):
    """Edges in entry order, positive mode (docs/methods.md: decreasing weight, ties by
    (i, j)), cut at max_density with the last tie group kept whole (as the library
    documents). Returns (iu, ju, weights)."""
    n = matrix.shape[0]
    iu, ju = np.triu_indices(n, 1)
    w = matrix[iu, ju]
    keep = w > 0
    iu, ju, w = iu[keep], ju[keep], w[keep]
    order = np.lexsort((ju, iu, -w))
    iu, ju, w = iu[order], ju[order], w[order]
    pairs = n * (n - 1) // 2
    want = min(int(np.ceil(max_density * pairs - 1e-9)), len(w))
    while 0 < want < len(w) and w[want] == w[want - 1]:
        want += 1
    return iu[:want], ju[:want], w[:want]


def write_rank_matrix(n, iu, ju, path):
    """The lower triangle of edge ranks (1..m; pairs not in the filtration get m + 10)
    in ripser's lower-distance format, so bars come out as ranks. Returns m."""
    m = len(iu)
    d = np.full((n, n), m + 10, dtype=np.int64)
    d[iu, ju] = d[ju, iu] = np.arange(1, m + 1)
    with open(path, "w") as f:
        for i in range(1, n):
            f.write(",".join(str(x) for x in d[i, :i]) + "\n")
    return m


def parse_intervals(text):
    """ripser's printed bars as (dimension, birth rank, death rank or None), sorted."""
    bars, current = [], None
    for line in text.splitlines():
        h = re.match(r"persistence intervals in dim (\d+):", line)
        if h:
            current = int(h.group(1))
            continue
        b = re.match(r"\s*\[([^,]+),([^)]*)\)", line)
        if b and current is not None:
            death = b.group(2).strip()
            bars.append((current, int(float(b.group(1))), None if death == "" else int(float(death))))
    return sorted(bars, key=repr)


def gudhi_tree(n, iu, ju, dim):
    """The flag filtration by edge rank as a gudhi SimplexTree, expanded to dimension dim + 1."""
    import gudhi
    st = gudhi.SimplexTree()
    for v in range(n):
        st.insert([v], 0.0)
    for r, (i, j) in enumerate(zip(iu, ju), start=1):
        st.insert([int(i), int(j)], float(r))
    st.expansion(dim + 1)
    return st
