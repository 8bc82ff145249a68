"""Whole subjects, cohorts, comparisons and reports: each call returns a typed result
holding arrays and the parsed document, not only a path."""
from __future__ import annotations

import ctypes
import json
import os
from dataclasses import dataclass, field
from typing import Any, Callable, Dict, List, Mapping, Optional, Union

from ._handles import options_json
from ._library import check, library, progress_callback, take_string
from ._tables import Table, column_array, curves_from_document, read_tsv_table

Progress = Optional[Callable[[float], bool]]
Config = Union[Mapping[str, Any], str, os.PathLike]


def _config_text(config: Config, anchor_at_file: bool = False) -> bytes:
    """A config as JSON text from a dict, JSON text, or the path of a JSON file. With
    anchor_at_file, a file's folder anchors its relative paths (``base_dir``), as
    ``critplex subject`` does; a cohort's paths come from its manifest instead."""
    if isinstance(config, Mapping):
        return json.dumps(dict(config), allow_nan=False).encode()
    text = os.fspath(config)
    if text.lstrip().startswith("{"):
        return text.encode()
    with open(text, encoding="utf-8") as f:
        try:
            loaded = json.load(f)
        except json.JSONDecodeError as e:
            raise ValueError("critplex: %s: not valid JSON (line %d, column %d: %s)" % (text, e.lineno, e.colno, e.msg))
    if anchor_at_file and isinstance(loaded, dict):
        loaded.setdefault("base_dir", os.path.dirname(os.path.abspath(text)))
    return json.dumps(loaded).encode()


def _path(p: Optional[Union[str, os.PathLike]]) -> Optional[bytes]:
    return None if p is None else os.fspath(p).encode()


@dataclass
class SubjectBand:
    """One band of a subject: its curves on the grid and the engines' reports."""
    name: str
    curves: Table
    connectivity: Dict[str, Any]
    sweep: Dict[str, Any]
    null: Optional[Dict[str, Any]]

    @property
    def transitions(self) -> Dict[str, Any]:
        """The ``transitions`` section (chi zeros, Betti crossings and peaks)."""
        return self.sweep.get("transitions") or {}


@dataclass
class SubjectResult:
    """One subject's result: ``bands`` (curves as arrays) and the whole ``document``.

    Indexing (``result["bands"]``) reads the document, as the JSON file would.
    """
    subject: str
    group: Optional[str]
    covariates: Dict[str, Any]
    bands: List[SubjectBand]
    document: Dict[str, Any] = field(repr=False)
    out_dir: Optional[str] = None

    @property
    def curves(self) -> Table:
        """The first band's curves (a :class:`Table`)."""
        return self.bands[0].curves

    def __getitem__(self, key: str) -> Any:
        return self.document[key]

    @classmethod
    def from_document(cls, doc: Dict[str, Any], out_dir: Optional[str] = None) -> "SubjectResult":
        bands = [SubjectBand(name=b.get("band", ""), curves=curves_from_document(b.get("curves", {})),
                             connectivity=b.get("connectivity", {}), sweep=b.get("sweep", {}), null=b.get("null"))
                 for b in doc.get("bands", [])]
        return cls(subject=doc.get("subject", ""), group=doc.get("group"), covariates=doc.get("covariates") or {},
                   bands=bands, document=doc, out_dir=out_dir)


@dataclass
class CohortRun:
    """What a cohort run did: counts, one row per subject (``subjects``), and the summary."""
    out_dir: str
    done: int
    skipped: int
    failed: int
    seconds: float
    subjects: Table
    summary: Dict[str, Any] = field(repr=False)

    @property
    def failures(self) -> Dict[str, str]:
        """``{subject: reason}`` of every failed subject."""
        return {s.get("subject", "?"): s.get("message", "") for s in self.summary.get("subjects", [])
                if s.get("status") == "failed"}

    def subject(self, subject_id: str) -> SubjectResult:
        """Read one finished subject's document from the run's folder."""
        path = os.path.join(self.out_dir, "sub-%s_topology.json" % subject_id)
        with open(path, encoding="utf-8") as f:
            return SubjectResult.from_document(json.load(f), self.out_dir)


@dataclass
class Comparison:
    """A group comparison: the group-test table (``tests``) and the whole document.

    ``tests`` has one row per test, the same rows and columns as ``group_tests.tsv``.
    """
    dir: str
    tests: Table
    document: Dict[str, Any] = field(repr=False)

    @property
    def groups(self) -> List[str]:
        """Group names in comparison order (the first is the reference)."""
        return [g.get("name", "") for g in self.document.get("groups", [])]

    def group_curves(self, group: str) -> Table:
        """Mean curves of one group with their bootstrap band: columns ``density`` and
        ``<curve>_mean``, ``<curve>_lower``, ``<curve>_upper``."""
        for g in self.document.get("groups", []):
            if g.get("name") == group:
                table = Table({"density": g.get("density", [])})
                for curve, parts in (g.get("curves") or {}).items():
                    for part, values in parts.items():
                        table["%s_%s" % (curve, part)] = column_array(values)
                return table
        raise KeyError("critplex: no group %r in the comparison (groups: %s)" % (group, ", ".join(self.groups)))

    @property
    def design_tests(self) -> Optional[Table]:
        """The design tests (one row per summary measure, the columns of
        ``design_tests.tsv``) when the comparison ran with a ``design``, else None."""
        path = os.path.join(self.dir, "design_tests.tsv")
        if "design_tests" not in self.document or not os.path.exists(path):
            return None
        return read_tsv_table(path)

    @property
    def design(self) -> Optional[Dict[str, Any]]:
        """The design tests as a document (``design``, ``levels``, ``tests``) or None."""
        return self.document.get("design_tests")

    @property
    def json_path(self) -> str:
        return os.path.join(self.dir, "group_comparison.json")

    @property
    def tsv_path(self) -> str:
        return os.path.join(self.dir, "group_tests.tsv")


@dataclass
class Report:
    """The HTML report written for a compared cohort (``path``); usable as a path."""
    path: str
    dir: str

    def __fspath__(self) -> str:
        return self.path

    def __str__(self) -> str:
        return self.path

    def html(self) -> str:
        """The report's text."""
        with open(self.path, encoding="utf-8") as f:
            return f.read()


@dataclass
class Study:
    """A simulated study (invented data) ready for :func:`run_cohort`."""
    dir: str
    manifest: str
    config_path: str
    subjects: int
    regions: int
    frames: int
    summary: Dict[str, Any] = field(repr=False)

    @property
    def config(self) -> Dict[str, Any]:
        """The study's cohort config (parsed)."""
        with open(self.config_path, encoding="utf-8") as f:
            return json.load(f)


def run_subject(config: Config, out_dir: Optional[Union[str, os.PathLike]] = None, progress: Progress = None) -> SubjectResult:
    """One subject from time series to topology (docs/options.md: subject).

    Parameters
    ----------
    config : dict, str or path
        The subject config: a dict, JSON text, or a JSON file (relative paths then count
        from the file's folder).
    out_dir : str, optional
        When given (an existing folder), the document and its TSV twins are written there.
    progress : callable, optional
        ``progress(fraction)``; returning True cancels.

    Returns
    -------
    SubjectResult
        ``bands[k].curves`` (dict of arrays), ``.connectivity``, ``.null``, and ``document``.
    """
    p = ctypes.c_void_p()
    check(library().cpx_subject_run(_config_text(config, anchor_at_file=True), _path(out_dir), progress_callback(progress), None,
                                    ctypes.byref(p)))
    return SubjectResult.from_document(json.loads(take_string(p)), None if out_dir is None else os.fspath(out_dir))


def run_cohort(manifest: Union[str, os.PathLike], config: Config, out_dir: Union[str, os.PathLike], workers: int = 0,
               force: bool = False, progress: Progress = None) -> CohortRun:
    """Every subject of a manifest with one shared config (docs/cli.md: critplex cohort).

    Parameters
    ----------
    manifest : str
        Manifest TSV (``subject``, ``group``, ``timeseries``, optional ``confounds`` and
        numeric covariates).
    config : dict, str or path
        The shared subject config (without id, group and inputs).
    out_dir : str
        Output folder (created if missing). Unchanged finished subjects are skipped.
    workers : int, optional
        Subjects at once (0: one per core).
    force : bool, optional
        Recompute finished subjects too.
    progress : callable, optional
        ``progress(fraction)``; returning True cancels.

    Returns
    -------
    CohortRun
        Counts, ``subjects`` (one row per subject: status, seconds, message) and
        ``failures``. A failing subject does not raise; a bad manifest or config does.
    """
    p = ctypes.c_void_p()
    opts = json.dumps({"workers": int(workers), "force": bool(force)}).encode()
    check(library().cpx_cohort_run(_path(manifest), _config_text(config), _path(out_dir), opts,
                                   progress_callback(progress), None, ctypes.byref(p)))
    summary = json.loads(take_string(p))
    return CohortRun(out_dir=os.fspath(out_dir), done=int(summary.get("done", 0)),
                     skipped=int(summary.get("skipped", 0)), failed=int(summary.get("failed", 0)),
                     seconds=float(summary.get("seconds", 0.0)),
                     subjects=Table.from_records(summary.get("subjects", [])), summary=summary)


def compare(results_dir: Union[str, os.PathLike], options: Optional[Mapping[str, Any]] = None, **more: Any) -> Comparison:
    """Group statistics of a cohort run's finished subjects (docs/options.md: compare).

    Writes ``group_comparison.json`` and ``group_tests.tsv`` into the folder.

    Parameters
    ----------
    results_dir : str
        The folder of a cohort run.
    options : dict, optional
        Compare options: ``band``, ``groups``, ``statistic``, ``covariates``,
        ``resamples``, ``seed``, ``confidence``, ``cluster_curves``, ``design``, ...
        ``design`` is a study design, e.g. ``{"design": "paired"}``,
        ``{"design": "groups", "covariates": ["age"], "blocks": "site"}`` or
        ``{"design": "regression", "score": "sleepiness", "blocks": "subject"}``; its tests
        are written to ``design_tests.tsv`` and ``design_tests.json``.
    **more
        Further options as keywords (``covariates=["age"]``).

    Returns
    -------
    Comparison
        ``tests`` (the group-test table as a dict of arrays; ``.to_frame()``),
        ``group_curves(name)``, ``document`` and, with a design, ``design_tests``.
    """
    p = ctypes.c_void_p()
    check(library().cpx_cohort_compare(_path(results_dir), options_json(options, **more), ctypes.byref(p)))
    doc = json.loads(take_string(p))
    # The table is read from the group_tests.tsv this call wrote: the C interface has no
    # typed accessor for it yet, and the file defines its columns.
    tests = read_tsv_table(os.path.join(os.fspath(results_dir), "group_tests.tsv"))
    return Comparison(dir=os.fspath(results_dir), tests=tests, document=doc)


def design_test(data: Mapping[str, Any], design: Mapping[str, Any]) -> Dict[str, Any]:
    """A study design tested on values given directly (``cpx_stats_design_test``).

    Parameters
    ----------
    data : dict
        ``{"subject": [...], "session": [...], "group": [...], "columns": {"age": [...]},
        "measures": [{"name", "values": [...]}]}``, one entry per subject and session
        (``None`` marks a missing value); optionally ``"density"`` and ``"curves"``.
    design : dict
        ``{"design": "two_groups" | "paired" | "groups" | "regression" | "mixed", ...}``
        (the design options of :func:`compare`).

    Returns
    -------
    dict
        ``{"design", "levels", "notes", "tests": [...], "curve_tests": [...]}``.
    """
    p = ctypes.c_void_p()
    check(library().cpx_stats_design_test(json.dumps(data).encode(), json.dumps(design).encode(), ctypes.byref(p)))
    return json.loads(take_string(p))


def report(results_dir: Union[str, os.PathLike], options: Optional[Mapping[str, Any]] = None, **more: Any) -> Report:
    """Write the self-contained HTML report of a compared cohort folder.

    Parameters
    ----------
    results_dir : str
        A cohort folder on which :func:`compare` ran.
    options : dict, optional
        ``out`` (where to write; default ``results_dir/report.html``), ``created`` (the
        date shown).
    **more
        Further options as keywords.

    Returns
    -------
    Report
        ``path`` and ``html()``.
    """
    p = ctypes.c_void_p()
    check(library().cpx_cohort_report(_path(results_dir), options_json(options, **more), ctypes.byref(p)))
    return Report(path=take_string(p), dir=os.fspath(results_dir))


def simulate_study(out_dir: Union[str, os.PathLike], options: Optional[Mapping[str, Any]] = None, **more: Any) -> Study:
    """Write an invented two-group study (time series, manifest, cohort config, model).

    Parameters
    ----------
    out_dir : str
        Output folder (created if missing).
    options : dict, optional
        Model options (docs/demo-study.md): ``regions``, ``frames``, ``seed``,
        ``groups``, ``sampling_interval``, ``config``, ...
    **more
        Further options as keywords.

    Returns
    -------
    Study
        Paths of the manifest and config, and the study's size.
    """
    p = ctypes.c_void_p()
    check(library().cpx_simulate_study(options_json(options, **more), _path(out_dir), ctypes.byref(p)))
    s = json.loads(take_string(p))
    return Study(dir=os.fspath(out_dir), manifest=s.get("manifest", os.path.join(os.fspath(out_dir), "manifest.tsv")),
                 config_path=s.get("config", os.path.join(os.fspath(out_dir), "cohort_config.json")),
                 subjects=int(s.get("subjects", 0)), regions=int(s.get("regions", 0)), frames=int(s.get("frames", 0)),
                 summary=s)


def run_dataset(derivatives_dir: Union[str, os.PathLike], out_dir: Union[str, os.PathLike], level: str = "participant",
                options: Optional[Mapping[str, Any]] = None, progress: Progress = None, **more: Any) -> Dict[str, Any]:
    """Dataset mode on a preprocessed BIDS derivatives folder (``critplex dataset``).

    Parameters
    ----------
    derivatives_dir : str
        The derivatives folder (``sub-<label>/[ses-<label>/]func/*_desc-preproc_bold.*``).
    out_dir : str
        The output derivatives dataset.
    level : str
        ``"participant"`` (run every selected run) or ``"group"`` (tidy tables and the group
        comparison of the finished runs).
    options : dict, optional
        participant: ``atlas``, ``atlas_labels``, ``atlas_label``, ``participant_label``,
        ``session``, ``task``, ``space``, ``config`` (the shared subject config as a dict),
        ``dry_run``, ``force``; group: ``compare`` (compare options).
    progress : callable, optional
        ``progress(fraction)``; returning True cancels.
    **more
        Further options as keywords.

    Returns
    -------
    dict
        The summary: ``runs`` (status, outputs, message per run), ``warnings``, counts.
    """
    p = ctypes.c_void_p()
    check(library().cpx_dataset_run(_path(derivatives_dir), _path(out_dir), str(level).encode(),
                                    options_json(options, **more), progress_callback(progress), None, ctypes.byref(p)))
    return json.loads(take_string(p))
