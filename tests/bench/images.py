#!/usr/bin/python3
"""Speed and memory of the image readers against nibabel + numpy (Debian python3-nibabel,
python3-numpy) on the same files, in one run.

    /usr/bin/python3 tests/bench/images.py BUILD_DIR [--quick] [--repeats R]

Cases (invented smooth values, written by nibabel): a NIfTI-1 4-D image on a 3 mm grid
(61 x 73 x 61 voxels, 200 frames, float32), plain and gzip, with a 3-D atlas of 400 labels;
a CIFTI-2 dense series of 91282 brainordinates (two surfaces of 32492 vertices and a
volume part) x 400 frames with a dense label file of 360 labels; the parcellated series
of the same labels. Ours: cpx_series_read_image through ctypes; theirs: nibabel's dataobj
(float32, no float64 copy) and numpy means per label (sorted voxels + add.reduceat).
Prints wall time (best of R), peak memory of each process (/usr/bin/time -v) and the
ratios ours / theirs, and checks that both give the same means. Not run by ctest.
"""
import json
import os
import re
import subprocess
import sys
import tempfile

import numpy as np

OURS = r"""
import ctypes, json, sys, time
import numpy as np
lib = ctypes.CDLL(sys.argv[1]); P = ctypes.c_void_p
lib.cpx_series_read_image.argtypes = [ctypes.c_char_p, ctypes.c_char_p, ctypes.c_char_p, ctypes.POINTER(P)]
lib.cpx_series_shape.argtypes = [P, ctypes.POINTER(ctypes.c_size_t), ctypes.POINTER(ctypes.c_size_t)]
lib.cpx_series_copy.argtypes = [P, P, ctypes.c_size_t, ctypes.c_int]
lib.cpx_series_free.argtypes = [P]
lib.cpx_last_error.restype = ctypes.c_char_p
labels = sys.argv[3].encode() if sys.argv[3] != "-" else None
best = None
for _ in range(int(sys.argv[4])):
    t0 = time.perf_counter()
    h = P()
    if lib.cpx_series_read_image(sys.argv[2].encode(), labels, b"{}", ctypes.byref(h)) != 0:
        sys.exit(lib.cpx_last_error().decode())
    dt = time.perf_counter() - t0
    best = dt if best is None else min(best, dt)
t, n = ctypes.c_size_t(), ctypes.c_size_t()
lib.cpx_series_shape(h, ctypes.byref(t), ctypes.byref(n))
out = np.empty((t.value, n.value)); lib.cpx_series_copy(h, out.ctypes.data, out.size, 0)
print(json.dumps({"seconds": best, "checksum": float(out.sum()), "shape": list(out.shape)}))
"""

THEIRS = r"""
import json, sys, time
import numpy as np
import nibabel as nib
kind = sys.argv[1]; image = sys.argv[2]; labels = sys.argv[3]
best = None
for _ in range(int(sys.argv[4])):
    t0 = time.perf_counter()
    img = nib.load(image)
    if kind == "ptseries":
        means = np.asarray(img.dataobj, dtype=np.float64)
    else:
        if kind == "nifti":
            data = np.asarray(img.dataobj)                       # X x Y x Z x T, float32
            data = data.reshape(-1, data.shape[-1])              # voxels x T
            key = np.asarray(nib.load(labels).dataobj).reshape(-1)
        else:
            data = np.asarray(img.dataobj).T                     # brainordinates x T
            key = np.asarray(nib.load(labels).dataobj)[0]        # same brainordinates, same order here
        order = np.argsort(key, kind="stable")
        sorted_key = key[order]
        starts = np.flatnonzero(np.r_[True, sorted_key[1:] != sorted_key[:-1]])
        sums = np.add.reduceat(data[order].astype(np.float64), starts, axis=0)
        counts = np.diff(np.r_[starts, len(key)])
        keep = sorted_key[starts] > 0
        means = (sums[keep] / counts[keep, None]).T
    dt = time.perf_counter() - t0
    best = dt if best is None else min(best, dt)
print(json.dumps({"seconds": best, "checksum": float(means.sum()), "shape": list(means.shape)}))
"""


def measured(cmd):
    p = subprocess.run(["/usr/bin/time", "-v"] + cmd, capture_output=True, text=True)
    if p.returncode != 0:
        sys.exit(p.stderr)
    rss = int(re.search(r"Maximum resident set size \(kbytes\): (\d+)", p.stderr).group(1)) / 1024
    return json.loads(p.stdout.strip().splitlines()[-1]), rss


def smooth(rng, shape, frames):
    """Invented series: a few slow waves mixed per place, plus noise (compresses like real data)."""
    places = int(np.prod(shape))
    t = np.arange(frames)
    waves = np.stack([np.sin(2 * np.pi * f * t + p) for f, p in zip(rng.uniform(0.005, 0.05, 6), rng.uniform(0, 6, 6))])
    mix = rng.standard_normal((places, 6)).astype(np.float32)
    data = mix @ waves.astype(np.float32) + 0.3 * rng.standard_normal((places, frames)).astype(np.float32) + 100
    return data.reshape(*shape, frames).astype(np.float32)


def main():
    build = sys.argv[1]
    quick = "--quick" in sys.argv
    repeats = int(sys.argv[sys.argv.index("--repeats") + 1]) if "--repeats" in sys.argv else 3
    lib = os.path.abspath(os.path.join(build, "capi", "libcritplex.so"))
    import nibabel as nib
    from nibabel import cifti2
    rng = np.random.default_rng(11)
    tmp = tempfile.TemporaryDirectory()
    d = tmp.name
    cases = []

    grid, frames = ((31, 37, 31), 100) if quick else ((61, 73, 61), 200)
    data = smooth(rng, grid, frames)
    atlas = np.zeros(grid, np.int16)
    blocks = np.indices(grid).reshape(3, -1)
    atlas.reshape(-1)[:] = (blocks[0] // 3 * 100 + blocks[1] // 4 * 10 + blocks[2] // 6) % 400 + 1
    atlas[:, :, :2] = 0
    affine = np.diag([3.0, 3.0, 3.0, 1.0])
    nib.save(nib.Nifti1Image(atlas, affine), os.path.join(d, "atlas.nii"))
    for name in ("bold.nii", "bold.nii.gz"):
        img = nib.Nifti1Image(data, affine)
        img.header["pixdim"][4] = 0.8
        nib.save(img, os.path.join(d, name))
        cases.append(("nifti", name, os.path.join(d, name), os.path.join(d, "atlas.nii")))

    half = 8000 if quick else 32492
    frames = 100 if quick else 400
    left = np.ones(half, bool)
    right = np.ones(half, bool)
    vol = np.zeros((20, 20, 20) if quick else (91, 109, 91), bool)
    vol.reshape(-1)[rng.choice(vol.size, 2000 if quick else 26298, replace=False)] = True
    brain = (cifti2.BrainModelAxis.from_mask(left, name="CortexLeft") + cifti2.BrainModelAxis.from_mask(right, name="CortexRight")
             + cifti2.BrainModelAxis.from_mask(vol, affine=np.diag([2.0, 2.0, 2.0, 1.0]), name="brain_stem"))
    series = cifti2.SeriesAxis(0.0, 0.72, frames)
    dense = smooth(rng, (len(brain),), frames).T  # frames x brainordinates
    cifti2.Cifti2Image(np.ascontiguousarray(dense), header=(series, brain)).to_filename(os.path.join(d, "s.dtseries.nii"))
    keys = (np.arange(len(brain)) * 360 // len(brain) + 1).astype(np.float32)
    table = {0: ("???", (0, 0, 0, 0))}
    table.update({k: ("parcel_%03d" % k, (1, 0, 0, 1)) for k in range(1, 361)})
    cifti2.Cifti2Image(keys[None, :], header=(cifti2.LabelAxis(["p"], table), brain)).to_filename(os.path.join(d, "a.dlabel.nii"))
    cases.append(("dtseries", "dtseries + dlabel", os.path.join(d, "s.dtseries.nii"), os.path.join(d, "a.dlabel.nii")))
    parcels = cifti2.ParcelsAxis.from_brain_models([("parcel_%03d" % k, brain[keys == k]) for k in range(1, 361)])
    means = np.stack([dense[:, keys == k].mean(axis=1) for k in range(1, 361)], axis=1).astype(np.float32)
    cifti2.Cifti2Image(means, header=(series, parcels)).to_filename(os.path.join(d, "s.ptseries.nii"))
    cases.append(("ptseries", "ptseries", os.path.join(d, "s.ptseries.nii"), "-"))

    print("%-20s %9s %10s %9s %10s %8s %8s" % ("case", "ours s", "ours MiB", "nib s", "nib MiB", "time x", "mem x"))
    for kind, name, image, labels in cases:
        ours, ours_rss = measured(["/usr/bin/python3", "-c", OURS, lib, image, labels, str(repeats)])
        theirs, theirs_rss = measured(["/usr/bin/python3", "-c", THEIRS, kind, image, labels, str(repeats)])
        assert ours["shape"] == theirs["shape"], (ours, theirs)
        assert abs(ours["checksum"] - theirs["checksum"]) <= 1e-6 * abs(theirs["checksum"]), (ours, theirs)
        print("%-20s %9.3f %10.1f %9.3f %10.1f %8.2f %8.2f" % (name, ours["seconds"], ours_rss, theirs["seconds"], theirs_rss,
                                                             ours["seconds"] / theirs["seconds"], ours_rss / theirs_rss))
    print("sizes: %s" % ", ".join("%s %.0f MB" % (os.path.basename(p), os.path.getsize(p) / 1e6) for _, _, p, _ in cases))


if __name__ == "__main__":
    main()
