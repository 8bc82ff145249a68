"""Series, matrices and sweeps: the library's handles as Python objects (freed with them)."""
from __future__ import annotations

import ctypes
import json
from typing import Any, Callable, Dict, List, Mapping, Optional, Sequence

import numpy as np

from ._library import COL_MAJOR, ROW_MAJOR, check, library, progress_callback, take_string
from ._tables import Table, as_float_array, names_of, pandas_or_none, require_pandas

BAR_COLUMNS = ("dimension", "birth_rank", "death_rank", "birth_density", "death_density",
               "birth_threshold", "death_threshold")


def options_json(options: Optional[Mapping[str, Any]] = None, **more: Any) -> Optional[bytes]:
    """Options as the library's JSON text (None = defaults); keyword options override the dict."""
    merged = dict(options or {})
    merged.update(more)
    if not merged:
        return None
    return json.dumps(merged, allow_nan=False).encode()


def _name_array(names: Optional[Sequence[str]]):
    if names is None:
        return None, None
    encoded = [n.encode("utf-8") for n in names]
    array = (ctypes.c_char_p * len(encoded))(*encoded)
    return array, ctypes.cast(array, ctypes.c_void_p)


def _buffer_and_layout(a: np.ndarray):
    """A buffer the library can read without copying, and its layout flag."""
    if a.flags.f_contiguous and not a.flags.c_contiguous:
        return a, COL_MAJOR
    a = np.ascontiguousarray(a)
    return a, ROW_MAJOR


def _strings(count: int, getter: Callable[[int, Any], int]) -> List[str]:
    out = []
    for i in range(count):
        p = ctypes.c_void_p()
        check(getter(i, ctypes.byref(p)))
        out.append(take_string(p))
    return out


class _Handle:
    """Owns one library handle and frees it with the matching cpx_*_free call."""
    _free = ""

    def __init__(self, handle: ctypes.c_void_p):
        self._h = handle

    def __del__(self):
        h = getattr(self, "_h", None)
        if h:
            getattr(library(), self._free)(h)
            self._h = None


class Series(_Handle):
    """Regional time series: frames (rows) x regions (columns), with region names.

    Make one with :meth:`from_array` (numpy array or pandas DataFrame) or
    :func:`read_series` (TSV, CSV, text or NPY file).
    """
    _free = "cpx_series_free"

    @classmethod
    def from_array(cls, data: Any, names: Optional[Sequence[str]] = None) -> "Series":
        """A series from a frames x regions array.

        Parameters
        ----------
        data : array_like or pandas.DataFrame
            Frames down the rows, regions across the columns. A DataFrame's column
            names become the region names.
        names : sequence of str, optional
            Region names (one per column); default the DataFrame's columns, else
            ``R1, R2, ...``.

        Returns
        -------
        Series
        """
        a = as_float_array(data, "a time series (frames x regions)")
        region_names = names_of(data, names, a.shape[1], "a time series")
        a, layout = _buffer_and_layout(a)
        keep, c_names = _name_array(region_names)
        h = ctypes.c_void_p()
        check(library().cpx_series_create(a.ctypes.data, a.shape[0], a.shape[1], layout, c_names, ctypes.byref(h)))
        del keep
        return cls(h)

    @property
    def shape(self) -> tuple:
        """(frames, regions)."""
        t, n = ctypes.c_size_t(), ctypes.c_size_t()
        check(library().cpx_series_shape(self._h, ctypes.byref(t), ctypes.byref(n)))
        return t.value, n.value

    @property
    def values(self) -> np.ndarray:
        """The values as a new frames x regions float64 array."""
        t, n = self.shape
        out = np.empty((t, n), dtype=np.float64)
        check(library().cpx_series_copy(self._h, out.ctypes.data, out.size, ROW_MAJOR))
        return out

    @property
    def names(self) -> List[str]:
        """Region names, in column order."""
        return _strings(self.shape[1], lambda i, p: library().cpx_series_region_name(self._h, i, p))

    @property
    def sampling_interval(self) -> float:
        """Seconds between frames (NaN when unknown, e.g. read from a TSV file)."""
        s = ctypes.c_double()
        check(library().cpx_series_sampling_interval(self._h, ctypes.byref(s)))
        return s.value

    def to_frame(self):
        """The series as a pandas DataFrame with the region names as columns.

        Returns
        -------
        pandas.DataFrame
        """
        return require_pandas().DataFrame(self.values, columns=self.names)

    def __repr__(self) -> str:
        t, n = self.shape
        return "<critplex.Series %d frames x %d regions>" % (t, n)


class Matrix(_Handle):
    """A symmetric N x N connectivity matrix with region names and the estimator's report."""
    _free = "cpx_matrix_free"

    @classmethod
    def from_array(cls, data: Any, names: Optional[Sequence[str]] = None) -> "Matrix":
        """A matrix from a square array.

        Parameters
        ----------
        data : array_like or pandas.DataFrame
            A symmetric square matrix. A DataFrame's column names become the names.
        names : sequence of str, optional
            Region names (one per row); default the DataFrame's columns, else ``R1, ...``.

        Returns
        -------
        Matrix
        """
        a = as_float_array(data, "a matrix")
        if a.shape[0] != a.shape[1]:
            raise ValueError("critplex: a matrix must be square, got shape %s" % (a.shape,))
        region_names = names_of(data, names, a.shape[0], "a matrix")
        a, layout = _buffer_and_layout(a)
        keep, c_names = _name_array(region_names)
        h = ctypes.c_void_p()
        check(library().cpx_matrix_create(a.ctypes.data, a.shape[0], layout, c_names, ctypes.byref(h)))
        del keep
        return cls(h)

    @property
    def size(self) -> int:
        """Number of regions N."""
        n = ctypes.c_size_t()
        check(library().cpx_matrix_size(self._h, ctypes.byref(n)))
        return n.value

    @property
    def values(self) -> np.ndarray:
        """The values as a new N x N float64 array."""
        n = self.size
        out = np.empty((n, n), dtype=np.float64)
        check(library().cpx_matrix_copy(self._h, out.ctypes.data, out.size, ROW_MAJOR))
        return out

    @property
    def names(self) -> List[str]:
        """Region names, in row order."""
        return _strings(self.size, lambda i, p: library().cpx_matrix_name(self._h, i, p))

    @property
    def info(self) -> Dict[str, Any]:
        """What the estimator reports (method, shrinkage intensity, frames used, band, ...)."""
        p = ctypes.c_void_p()
        check(library().cpx_matrix_info(self._h, ctypes.byref(p)))
        return json.loads(take_string(p))

    def to_frame(self):
        """The matrix as a pandas DataFrame indexed and labelled by region name.

        Returns
        -------
        pandas.DataFrame
        """
        names = self.names
        return require_pandas().DataFrame(self.values, index=names, columns=names)

    def write(self, path: str, **options: Any) -> None:
        """Write the matrix atomically (``format``: ``"tsv"``, ``"json"`` or ``"npy"``; default from the extension).

        Parameters
        ----------
        path : str
            Output file.
        **options
            Write options (docs/options.md).
        """
        check(library().cpx_matrix_write(self._h, str(path).encode(), options_json(options)))

    def __repr__(self) -> str:
        method = self.info.get("method", "?")
        return "<critplex.Matrix %d x %d, method %s>" % (self.size, self.size, method)


class Sweep(_Handle):
    """A density sweep's result: curves on the grid, bars, node curvature and every engine's section."""
    _free = "cpx_sweep_free"

    def __init__(self, handle: ctypes.c_void_p):
        super().__init__(handle)
        self._document: Optional[Dict[str, Any]] = None

    @property
    def shape(self) -> tuple:
        """(grid points, curve columns)."""
        pts, cols = ctypes.c_size_t(), ctypes.c_size_t()
        check(library().cpx_sweep_shape(self._h, ctypes.byref(pts), ctypes.byref(cols)))
        return pts.value, cols.value

    @property
    def columns(self) -> List[str]:
        """Curve names in order (``density``, ``threshold``, ``edges``, ``chi``, ...)."""
        return _strings(self.shape[1], lambda i, p: library().cpx_sweep_column_name(self._h, i, p))

    def curve(self, column: str) -> np.ndarray:
        """One curve as float64, one value per grid point.

        Parameters
        ----------
        column : str
            A name from :attr:`columns`.

        Returns
        -------
        numpy.ndarray
            Exact counts above 2**53 are rounded here; :meth:`document` keeps them exact.
        """
        out = np.empty(self.shape[0], dtype=np.float64)
        check(library().cpx_sweep_curve(self._h, column.encode(), out.ctypes.data, out.size))
        return out

    def curves(self) -> Table:
        """Every curve: a :class:`Table` (dict of arrays; ``.to_frame()`` for pandas)."""
        return Table({name: self.curve(name) for name in self.columns})

    def to_frame(self):
        """The curves as a pandas DataFrame, one row per grid point."""
        return self.curves().to_frame()

    def bars(self, dimension: int = -1) -> Table:
        """Persistence bars (sweeps run with ``homology``).

        Parameters
        ----------
        dimension : int, optional
            One homology dimension, or -1 (default) for every dimension.

        Returns
        -------
        Table
            Columns dimension, birth_rank, death_rank, birth_density, death_density,
            birth_threshold, death_threshold; an essential bar dies at ``inf``.
        """
        lib = library()
        count = ctypes.c_size_t()
        check(lib.cpx_sweep_bars(self._h, dimension, COL_MAJOR, None, 0, ctypes.byref(count)))
        buf = np.empty((len(BAR_COLUMNS), count.value), dtype=np.float64)  # column-major = rows of columns
        if count.value:
            check(lib.cpx_sweep_bars(self._h, dimension, COL_MAJOR, buf.ctypes.data, buf.size, ctypes.byref(count)))
        table = Table({name: buf[i].copy() for i, name in enumerate(BAR_COLUMNS)})
        table["dimension"] = table["dimension"].astype(np.int64)
        return table

    def node_curvature(self) -> np.ndarray:
        """Node curvature kappa_i at each grid point (sweeps run with ``curvature``).

        Returns
        -------
        numpy.ndarray
            points x nodes; NaN where the clique engine stopped early.
        """
        lib = library()
        points, nodes = ctypes.c_size_t(), ctypes.c_size_t()
        check(lib.cpx_sweep_node_curvature(self._h, ROW_MAJOR, None, 0, ctypes.byref(points), ctypes.byref(nodes)))
        out = np.empty((points.value, nodes.value), dtype=np.float64)
        check(lib.cpx_sweep_node_curvature(self._h, ROW_MAJOR, out.ctypes.data, out.size, None, None))
        return out

    def document(self) -> Dict[str, Any]:
        """The whole result as parsed JSON (exact counts as decimal strings), read once."""
        if self._document is None:
            p = ctypes.c_void_p()
            check(library().cpx_sweep_json(self._h, ctypes.byref(p)))
            self._document = json.loads(take_string(p))
        return self._document

    def json(self) -> Dict[str, Any]:
        """Same as :meth:`document` (kept for earlier callers)."""
        return self.document()

    def transitions(self) -> Dict[str, Any]:
        """The ``transitions`` section (chi zeros, Betti crossings and peaks), or ``{}``."""
        return self.document().get("transitions") or {}

    def curves_tsv(self) -> str:
        """The curves as TSV text (header row first), as ``critplex sweep`` writes them."""
        p = ctypes.c_void_p()
        check(library().cpx_sweep_curves_tsv(self._h, ctypes.byref(p)))
        return take_string(p)

    def __repr__(self) -> str:
        points, columns = self.shape
        return "<critplex.Sweep %d grid points, %d curves>" % (points, columns)


def read_series(path: str, **options: Any) -> Series:
    """Read a time series file (TSV/CSV with a header of region names, plain text or NPY).

    Parameters
    ----------
    path : str
        The file; frames down the rows, regions across the columns.
    **options
        ``format`` (``"auto"``, ``"tsv"``, ``"csv"``, ``"text"``, ``"npy"``), ``header``.

    Returns
    -------
    Series
    """
    h = ctypes.c_void_p()
    check(library().cpx_series_read(str(path).encode(), options_json(options), ctypes.byref(h)))
    return Series(h)


def read_image(image: str, labels: str, **options: Any) -> Series:
    """Regional mean time series of a 4-D NIfTI image over an integer label image.

    Parameters
    ----------
    image : str
        4-D NIfTI-1 image (``.nii`` or ``.nii.gz``).
    labels : str
        3-D integer label image on the same grid; one region per label > 0.
    **options
        ``label_names`` (TSV of label index and name), ``sampling_interval``.

    Returns
    -------
    Series
    """
    h = ctypes.c_void_p()
    check(library().cpx_series_read_image(str(image).encode(), str(labels).encode(), options_json(options),
                                          ctypes.byref(h)))
    return Series(h)


def read_matrix(path: str, **options: Any) -> Matrix:
    """Read a square matrix (TSV, CSV, text or NPY, with or without names).

    Parameters
    ----------
    path : str
        The file.
    **options
        ``format``, ``header`` (docs/options.md).

    Returns
    -------
    Matrix
    """
    h = ctypes.c_void_p()
    check(library().cpx_matrix_read(str(path).encode(), options_json(options), ctypes.byref(h)))
    return Matrix(h)


def as_series(data: Any, names: Optional[Sequence[str]] = None) -> Series:
    return data if isinstance(data, Series) else Series.from_array(data, names)


def as_matrix(data: Any, names: Optional[Sequence[str]] = None) -> Matrix:
    return data if isinstance(data, Matrix) else Matrix.from_array(data, names)


def connect(series: Any, options: Optional[Mapping[str, Any]] = None, *, names: Optional[Sequence[str]] = None,
            **more: Any) -> Matrix:
    """Connectivity matrix of regional time series.

    Parameters
    ----------
    series : Series, array_like or pandas.DataFrame
        Frames x regions. A DataFrame keeps its column names as region names.
    options : dict, optional
        Connect options (docs/options.md: connect), e.g. ``{"method": "ledoit_wolf"}``.
    names : sequence of str, optional
        Region names when ``series`` is a plain array.
    **more
        Further options as keywords (``method="oas"``, ``fisher_z=True``, ...).

    Returns
    -------
    Matrix
        ``.values``, ``.names``, ``.info`` (the estimator's report), ``.to_frame()``.

    Examples
    --------
    >>> m = critplex.connect(frame, method="ledoit_wolf")      # doctest: +SKIP
    >>> m.info["shrinkage_intensity"]                          # doctest: +SKIP
    """
    s = as_series(series, names)
    h = ctypes.c_void_p()
    check(library().cpx_connect(s._h, options_json(options, **more), ctypes.byref(h)))
    return Matrix(h)


def connect_bands(series: Any, options: Optional[Mapping[str, Any]] = None, *,
                  names: Optional[Sequence[str]] = None, **more: Any) -> Dict[str, Matrix]:
    """One connectivity matrix per frequency band named in the ``bands`` option.

    Parameters
    ----------
    series : Series, array_like or pandas.DataFrame
        Frames x regions.
    options : dict, optional
        Connect options with ``bands`` (docs/options.md: connect).
    names : sequence of str, optional
        Region names when ``series`` is a plain array.
    **more
        Further options as keywords.

    Returns
    -------
    dict of str to Matrix
        In order of increasing low band edge; the key is ``""`` when no band is named.
    """
    lib = library()
    s = as_series(series, names)
    set_handle = ctypes.c_void_p()
    check(lib.cpx_connect_bands(s._h, options_json(options, **more), ctypes.byref(set_handle)))
    try:
        count = ctypes.c_size_t()
        check(lib.cpx_matrix_set_count(set_handle, ctypes.byref(count)))
        bands = _strings(count.value, lambda i, p: lib.cpx_matrix_set_band(set_handle, i, p))
        out = {}
        for i, band in enumerate(bands):
            h = ctypes.c_void_p()
            check(lib.cpx_matrix_set_get(set_handle, i, ctypes.byref(h)))
            out[band] = Matrix(h)
        return out
    finally:
        lib.cpx_matrix_set_free(set_handle)


def sweep(matrix: Any, options: Optional[Mapping[str, Any]] = None, *, progress: Optional[Callable[[float], bool]] = None,
          names: Optional[Sequence[str]] = None, **more: Any) -> Sweep:
    """Density sweep: grow the network edge by edge and follow its topology.

    Parameters
    ----------
    matrix : Matrix, array_like or pandas.DataFrame
        A symmetric connectivity matrix.
    options : dict, optional
        Sweep options (docs/options.md: sweep): ``max_density``, ``grid``, ``weights``,
        ``cliques``, ``homology``, ``curvature``, ``transitions``.
    progress : callable, optional
        ``progress(fraction)``; returning True cancels (CritplexError, status
        ``CPX_ERR_CANCELLED``).
    names : sequence of str, optional
        Region names when ``matrix`` is a plain array.
    **more
        Further options as keywords (``max_density=0.3``, ``grid=0.01``, ...).

    Returns
    -------
    Sweep
        ``.curves()`` (dict of arrays), ``.to_frame()``, ``.bars()``, ``.node_curvature()``,
        ``.document()``.
    """
    m = as_matrix(matrix, names)
    callback = progress_callback(progress)
    h = ctypes.c_void_p()
    check(library().cpx_sweep_run(m._h, options_json(options, **more), callback, None, ctypes.byref(h)))
    return Sweep(h)


def has_pandas() -> bool:
    """Whether pandas is installed (DataFrame input and ``to_frame`` output need it).

    Returns
    -------
    bool
    """
    return pandas_or_none() is not None
