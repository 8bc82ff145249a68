"""Column tables (dicts of numpy arrays) and the optional pandas bridge."""
from __future__ import annotations

import math
from typing import Any, Iterable, List, Mapping, Optional, Sequence

import numpy as np


def pandas_or_none():
    """The pandas module, or None when it is not installed (pandas is optional)."""
    try:
        import pandas
    except ImportError:
        return None
    return pandas


def require_pandas():
    pd = pandas_or_none()
    if pd is None:
        raise ImportError("critplex: this needs pandas (pip install pandas, or apt install python3-pandas)")
    return pd


class Table(dict):
    """Named columns of equal length, in order: ``{name: numpy array}``.

    A plain dict, so ``table["chi"]`` is a numpy array; :meth:`to_frame` gives a
    pandas DataFrame when pandas is installed.
    """

    def __init__(self, columns: Optional[Mapping[str, Any]] = None):
        super().__init__()
        for name, values in (columns or {}).items():
            self[name] = values if isinstance(values, np.ndarray) else column_array(values)

    @property
    def rows(self) -> int:
        """Number of rows (0 for a table without columns)."""
        return len(next(iter(self.values()))) if self else 0

    def to_frame(self, index: Optional[str] = None):
        """The table as a pandas DataFrame (columns in order), optionally indexed by a column.

        Parameters
        ----------
        index : str, optional
            Column to use as the index.

        Returns
        -------
        pandas.DataFrame
        """
        pd = require_pandas()
        frame = pd.DataFrame({k: v for k, v in self.items()})
        return frame.set_index(index) if index is not None else frame

    def __repr__(self) -> str:
        return "Table(%d rows: %s)" % (self.rows, ", ".join(self.keys()))

    @classmethod
    def from_records(cls, records: Iterable[Mapping[str, Any]]) -> "Table":
        """Columns from a list of JSON objects (the columns naming a row first); a key
        missing in a record is NaN, or None in a text column."""
        records = list(records)
        names: List[str] = []
        for r in records:
            for k, v in r.items():
                if k not in names and not isinstance(v, (dict, list)):
                    names.append(k)
        first = [n for n in ("subject", "summary", "group_a", "group_b") if n in names]
        names = first + [n for n in names if n not in first]
        return cls({n: [r.get(n) for r in records] for n in names})


def column_array(values: Sequence[Any]) -> np.ndarray:
    """A numeric column where every value is a number or missing (None -> NaN), else objects."""
    values = list(values)
    if all(v is None or (isinstance(v, (int, float)) and not isinstance(v, bool)) for v in values):
        if any(isinstance(v, float) or v is None for v in values) or not values:
            return np.array([math.nan if v is None else float(v) for v in values], dtype=np.float64)
        if all(-(2 ** 63) <= v < 2 ** 63 for v in values):
            return np.array(values, dtype=np.int64)
    if all(isinstance(v, bool) for v in values):
        return np.array(values, dtype=bool)
    out = np.empty(len(values), dtype=object)
    out[:] = values
    return out


def curves_from_document(curves: Mapping[str, Any]) -> Table:
    """The grid curves of a subject document (``{"density": [...], "chi": [...], ...}``).

    Exact counts that the document writes as decimal strings become Python ints in an
    object column when they pass 2**63, else int64; ``null`` becomes NaN.
    """
    out = Table()
    for name, values in curves.items():
        if isinstance(values, list):
            out[name] = column_array([int(v) if isinstance(v, str) and _is_integer_text(v) else v for v in values])
    return out


def _is_integer_text(text: str) -> bool:
    body = text[1:] if text[:1] == "-" else text
    return body.isdigit()


def as_float_array(values: Any, what: str) -> np.ndarray:
    """A float64 array of a numpy array, a list or a pandas object (values only)."""
    a = np.asarray(values, dtype=np.float64)
    if a.ndim != 2:
        raise ValueError("critplex: %s must be 2-D, got shape %s" % (what, a.shape))
    return a


def names_of(data: Any, names: Optional[Sequence[str]], count: int, what: str) -> Optional[List[str]]:
    """Region names: the ones given, else a DataFrame's columns, else None (library default)."""
    if names is None and hasattr(data, "columns") and hasattr(data, "to_numpy"):
        names = [str(c) for c in data.columns]
    if names is None:
        return None
    names = [str(n) for n in names]
    if len(names) != count:
        raise ValueError("critplex: %s needs one name per region: %d names for %d regions" % (what, len(names), count))
    return names


MISSING_CELLS = ("n/a", "NA", "NaN", "")


def read_tsv_table(path: str) -> Table:
    """A TSV file the library wrote, as typed columns: numbers as float (NaN where missing),
    ``true``/``false`` as bool, anything else as text (None where missing)."""
    with open(path, encoding="utf-8", newline="") as f:
        rows = [line.rstrip("\r\n").split("\t") for line in f if line.strip()]
    header, body = rows[0], rows[1:]
    for i, row in enumerate(body):
        if len(row) != len(header):
            raise ValueError("critplex: %s line %d has %d cells, the header %d" % (path, i + 2, len(row), len(header)))
    return Table({name: _typed_cells([row[j] for row in body]) for j, name in enumerate(header)})


def _typed_cells(cells: List[str]) -> np.ndarray:
    present = [c for c in cells if c not in MISSING_CELLS]
    if present and len(present) == len(cells) and all(_is_integer_text(c) for c in cells):
        return column_array([int(c) for c in cells])
    try:
        return np.array([math.nan if c in MISSING_CELLS else float(c) for c in cells], dtype=np.float64)
    except ValueError:
        pass
    if present and all(c in ("true", "false") for c in present) and len(present) == len(cells):
        return np.array([c == "true" for c in cells], dtype=bool)
    out = np.empty(len(cells), dtype=object)
    out[:] = [None if c in MISSING_CELLS else c for c in cells]
    return out
