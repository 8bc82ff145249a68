# critplex dataset mode as Snakemake rules: one job per participant of a preprocessed BIDS
# derivatives folder (`critplex dataset DERIV OUT participant --participant-label P`), then
# the group level and the report. The runs and every output file are listed up front by the
# dataset mode's own dry run, so each job declares exactly what it writes.
#
#   snakemake -s plugins/snakemake/dataset.smk --cores 2 --config derivatives=D/derivatives/critplex-simulate \
#       atlas=D/derivatives/critplex-simulate/space-sleeplab_desc-demoatlas_dseg.nii.gz \
#       atlas_labels=D/derivatives/critplex-simulate/space-sleeplab_desc-demoatlas_dseg.tsv \
#       analysis=D/cohort_config.json out=results
#
# On SLURM (Snakemake 7's own executor): add --slurm --jobs N --max-status-checks-per-second 1
# with USER set (see Snakefile).
#
# Config keys: derivatives, out, analysis (the shared subject config), atlas, atlas_labels
# (optional), participants (optional, space-separated labels; default all), task, space
# (optional filters), critplex (the command, default "critplex"), threads (per job, default
# 1), runtime (minutes per job, default 60), mem_mb (fixed memory per job instead of the
# estimate below). Research software, not a medical device: not for clinical decisions;
# follow your site's rules and ethics approvals for real data.
import csv
import gzip
import json
import os
import struct
import subprocess

CRITPLEX = config.get("critplex", "critplex")
DERIV = config["derivatives"]
OUT = config.get("out", "critplex-dataset")
ANALYSIS = config["analysis"]
THREADS = int(config.get("threads", 1))
RUNTIME = int(config.get("runtime", 60))
JOB_ANALYSIS = f"{OUT}/configs/analysis.json"

# Run filters shared by the dry run and every job; the participant label is the job's own.
FILTERS = []
for key, flag in (("atlas", "--atlas"), ("atlas_labels", "--atlas-labels"), ("task", "--task"), ("space", "--space")):
    if config.get(key):
        FILTERS += [flag, str(config[key])]
CHOSEN = ["--participant-label", *str(config["participants"]).split()] if config.get("participants") else []
FILTER_TEXT = " ".join("'" + a.replace("'", "'\\''") + "'" for a in FILTERS)


def planned_outputs():
    """participant label -> the files its runs write, from the dataset mode's dry run."""
    dry = subprocess.run([CRITPLEX, "dataset", DERIV, OUT, "participant", "--dry-run", "--config", ANALYSIS, *FILTERS, *CHOSEN],
                         capture_output=True, text=True)
    if dry.returncode != 0:
        raise ValueError(f"critplex dataset --dry-run failed:\n{dry.stderr}")
    outputs = {}
    for line in dry.stdout.splitlines():
        if line.startswith("  -> "):
            path = line[5:]
            participant = os.path.relpath(path, OUT).split(os.sep)[0][len("sub-"):]
            outputs.setdefault(participant, []).append(path)
    return outputs


OUTPUTS = planned_outputs()
PARTICIPANTS = sorted(OUTPUTS)


# Memory per job: the estimate of Snakefile (peak MiB ~ 6.3 + 1.13e-4 N T + 1.5e-5 N^2 for
# one run of N regions and T frames, measured with the demo analysis), doubled, at least
# 200 MiB. Frames from the first run's NIfTI-1/2 header, regions from the atlas label table
# (or 1000 when neither can be read: CIFTI runs, no table).
def glob_images(participant):
    for folder, _, files in os.walk(os.path.join(DERIV, "sub-" + participant)):
        for name in sorted(files):
            if "_desc-preproc_bold." in name:
                yield os.path.join(folder, name)


def frames_of(image):
    """Frames of a NIfTI-1 or NIfTI-2 series from its header; None for CIFTI or unreadable files."""
    if image.endswith((".dtseries.nii", ".ptseries.nii")):
        return None
    try:
        with (gzip.open if image.endswith(".gz") else open)(image, "rb") as f:
            header = f.read(540)
        for order in "<>":
            size = struct.unpack(order + "i", header[:4])[0]
            if size == 348:
                dims = struct.unpack(order + "8h", header[40:56])
            elif size == 540:
                dims = struct.unpack(order + "8q", header[16:80])
            else:
                continue
            return dims[4] if dims[0] >= 4 else 1
    except (OSError, struct.error):
        pass
    return None


def participant_mem_mb(participant):
    if "mem_mb" in config:
        return int(config["mem_mb"])
    frames = max([frames_of(image) or 2000 for image in glob_images(participant)] or [2000])
    regions = 1000
    if config.get("atlas_labels"):
        with open(config["atlas_labels"]) as t:
            regions = sum(1 for line in t if line.split("\t")[0].strip().isdigit())
    return max(200, int(2 * (6.3 + 1.13e-4 * regions * frames + 1.5e-5 * regions * regions)))


localrules: all, analysis_config, report


rule all:
    input:
        f"{OUT}/group/report.html"


# The shared analysis with the engines' threads set to the job's (unless it says otherwise).
rule analysis_config:
    input:
        ANALYSIS
    output:
        JOB_ANALYSIS
    run:
        with open(input[0]) as f:
            cfg = json.load(f)
        sweep = cfg.setdefault("sweep", {})
        for engine in ("cliques", "homology"):
            section = sweep.get(engine, {} if engine == "cliques" else None)
            if isinstance(section, dict):
                section.setdefault("threads", THREADS)
                sweep[engine] = section
        with open(output[0], "w") as f:
            json.dump(cfg, f, indent=1)


for _participant in PARTICIPANTS:
    rule:
        input:
            [JOB_ANALYSIS] + list(glob_images(_participant))
        output:
            OUTPUTS[_participant]
        params:
            participant=_participant
        log:
            f"{OUT}/logs/sub-{_participant}.log"
        threads: THREADS
        resources:
            mem_mb=participant_mem_mb(_participant),
            runtime=RUNTIME
        shell:
            "{CRITPLEX:q} dataset {DERIV:q} {OUT:q} participant --participant-label {params.participant} "
            "--config {JOB_ANALYSIS:q} " + FILTER_TEXT + " > {log} 2>&1"


rule group:
    input:
        [path for p in PARTICIPANTS for path in OUTPUTS[p]]
    output:
        f"{OUT}/group/curves_long.tsv",
        f"{OUT}/group/curves_long.json",
        f"{OUT}/group/summaries.tsv",
        f"{OUT}/group/summaries.json",
        f"{OUT}/group/group_comparison.json",
        f"{OUT}/group/group_tests.tsv"
    log:
        f"{OUT}/logs/group.log"
    threads: 1
    resources:
        mem_mb=500,
        runtime=30
    shell:
        "{CRITPLEX:q} dataset {DERIV:q} {OUT:q} group > {log} 2>&1"


rule report:
    input:
        f"{OUT}/group/group_comparison.json"
    output:
        f"{OUT}/group/report.html"
    log:
        f"{OUT}/logs/report.log"
    threads: 1
    resources:
        mem_mb=200,
        runtime=10
    shell:
        "{CRITPLEX:q} report {OUT:q}/group > {log} 2>&1"
