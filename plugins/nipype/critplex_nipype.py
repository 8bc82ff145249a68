"""Nipype interfaces for critplex: drop `critplex subject` and `critplex compare` into an
existing Nipype preprocessing workflow (e.g. after parcellation). They wrap the
command line, which runs through the same C interface as every other host.

    from critplex_nipype import CritplexSubject
    node = pe.Node(CritplexSubject(connect={"method": "ledoit_wolf", "sampling_interval": 2.0},
                                   sweep={"max_density": 0.3}), name="topology")
    wf.connect(parcellate, "timeseries_file", node, "timeseries")
    # or straight from a preprocessed run and an atlas on its grid:
    CritplexSubject(image="sub-01_..._desc-preproc_bold.nii.gz", labels="atlas.nii.gz",
                    label_names="atlas.tsv", confounds="sub-01_..._desc-confounds_timeseries.tsv", ...)

Research software, not a medical device: not for clinical decisions.
"""
import json
import os

from nipype.interfaces.base import (CommandLine, CommandLineInputSpec, File, TraitedSpec, isdefined, traits)


class CritplexSubjectInputSpec(CommandLineInputSpec):
    timeseries = File(exists=True, mandatory=True, xor=["image"], desc="regional time series (TSV, CSV, text or NPY)")
    image = File(exists=True, mandatory=True, xor=["timeseries"], requires=["labels"],
                 desc="4-D NIfTI-1 series, e.g. a preprocessed BOLD run (instead of timeseries)")
    labels = File(exists=True, desc="3-D label image (atlas) on the image's grid")
    label_names = File(exists=True, desc="the atlas's table of index and name (TSV)")
    subject_id = traits.Str("01", usedefault=True, desc="subject id (letters, digits, '-', '.')")
    group = traits.Str("", usedefault=True, desc="group label carried into the outputs")
    confounds = File(exists=True, desc="confounds table (TSV with header)")
    connect = traits.Dict(desc="connect options (critplex docs/options.md: connect)")
    sweep = traits.Dict(desc="sweep options (critplex docs/options.md: sweep)")
    null = traits.Dict(desc="null model, e.g. {'model': 'rewire', 'count': 19}")
    config_file = File("critplex_subject.json", usedefault=True, argstr="%s", position=0,
                       desc="subject config written by the interface")
    out_dir = traits.Str(".", usedefault=True, argstr="--out %s", position=1, desc="output folder")


class CritplexSubjectOutputSpec(TraitedSpec):
    topology = File(exists=True, desc="sub-<id>_topology.json: curves, transitions, provenance")
    curves = File(exists=True, desc="sub-<id>_curves.tsv")
    connectivity = File(exists=True, desc="sub-<id>_connectivity.tsv")


class CritplexSubject(CommandLine):
    """One subject from time series to topology with `critplex subject`."""

    _cmd = "critplex subject"
    input_spec = CritplexSubjectInputSpec
    output_spec = CritplexSubjectOutputSpec

    def _run_interface(self, runtime):
        cfg = {"id": self.inputs.subject_id, "group": self.inputs.group}
        for key in ("timeseries", "image", "labels", "label_names"):
            value = getattr(self.inputs, key)
            if isdefined(value):
                cfg[key] = os.path.abspath(value)
        for key in ("connect", "sweep", "null"):
            value = getattr(self.inputs, key)
            if value:
                cfg[key] = value
        if self.inputs.confounds:
            cfg["confounds"] = os.path.abspath(self.inputs.confounds)
        os.makedirs(self.inputs.out_dir, exist_ok=True)
        with open(self.inputs.config_file, "w") as f:
            json.dump(cfg, f)
        return super()._run_interface(runtime)

    def _list_outputs(self):
        prefix = os.path.join(os.path.abspath(self.inputs.out_dir), f"sub-{self.inputs.subject_id}")
        return {"topology": prefix + "_topology.json", "curves": prefix + "_curves.tsv",
                "connectivity": prefix + "_connectivity.tsv"}


class CritplexCompareInputSpec(CommandLineInputSpec):
    results_dir = traits.Directory(exists=True, mandatory=True, argstr="%s", position=0,
                                   desc="folder of finished subjects with manifest.tsv")
    covariates = traits.Str(argstr="--covariates %s", desc="comma-separated manifest columns to regress out")


class CritplexCompareOutputSpec(TraitedSpec):
    comparison = File(exists=True, desc="group_comparison.json")
    tests = File(exists=True, desc="group_tests.tsv")


class CritplexCompare(CommandLine):
    """Group statistics of finished subjects with `critplex compare`."""

    _cmd = "critplex compare"
    input_spec = CritplexCompareInputSpec
    output_spec = CritplexCompareOutputSpec

    def _list_outputs(self):
        d = os.path.abspath(self.inputs.results_dir)
        return {"comparison": os.path.join(d, "group_comparison.json"), "tests": os.path.join(d, "group_tests.tsv")}
