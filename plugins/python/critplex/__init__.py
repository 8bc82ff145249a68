"""critplex for Python: the topology of functional brain networks through libcritplex.

A ctypes binding over the C interface (the same calls MATLAB, R and Julia use). Arrays
are numpy arrays; pandas DataFrames are accepted (their column names become region
names) and produced by ``to_frame()`` when pandas is installed.

>>> import critplex                                                    # doctest: +SKIP
>>> m = critplex.connect(frame, method="ledoit_wolf")                  # doctest: +SKIP
>>> s = critplex.sweep(m, max_density=0.3, grid=0.01)                  # doctest: +SKIP
>>> s.curves()["chi"]                                                  # doctest: +SKIP

The library is loaded on import (ABI checked); see :func:`load_library` for where it
is looked for. Research software, not a medical device: not for clinical decisions.
"""
from ._library import (ABI_VERSION, AbiMismatch, CritplexError, LibraryNotFound, library, library_path,
                       load_library)
from ._tables import Table
from ._handles import (Matrix, Series, Sweep, connect, connect_bands, has_pandas, read_image, read_matrix,
                       read_series, sweep)
from ._study import (CohortRun, Comparison, Report, Study, SubjectBand, SubjectResult, compare, design_test,
                     report, run_cohort, run_dataset, run_subject, simulate_study)

__version__ = "0.3.0"

__all__ = [
    "__version__", "ABI_VERSION", "CritplexError", "LibraryNotFound", "AbiMismatch", "load_library", "library",
    "library_path", "version", "abi_version", "Table", "Series", "Matrix", "Sweep", "read_series", "read_image",
    "read_matrix", "connect", "connect_bands", "sweep", "has_pandas", "SubjectBand", "SubjectResult", "CohortRun",
    "Comparison", "Report", "Study", "run_subject", "run_cohort", "run_dataset", "compare", "report", "simulate_study",
    "design_test",
]


def version() -> str:
    """Version of the loaded libcritplex ("MAJOR.MINOR.PATCH").

    Returns
    -------
    str
    """
    return library().cpx_version().decode()


def abi_version() -> int:
    """ABI version of the loaded libcritplex (equal to :data:`ABI_VERSION` once loaded).

    Returns
    -------
    int
    """
    return library().cpx_abi_version()


# The ABI check at import: a library of another ABI stops the import with a clear message.
# A library that cannot be found is reported on first use instead, so that
# load_library(path) can still be called.
try:
    load_library()
except LibraryNotFound:
    pass
