"""Writes the seed corpora of fuzz_nifti, fuzz_cifti and fuzz_xml: tiny valid files made by
nibabel (Debian python3-nibabel) from invented values, packed in the input layout of
image_inputs.hpp. Run once from the repository root and commit the output:
    /usr/bin/python3 tests/fuzz/make_image_corpus.py
"""
import gzip
import io
import os
import struct
import tempfile

import nibabel as nib
import numpy as np
from nibabel import cifti2

HERE = os.path.dirname(os.path.abspath(__file__))


def file_bytes(save, suffix):
    with tempfile.TemporaryDirectory() as d:
        path = os.path.join(d, "f" + suffix)
        save(path)
        with open(path, "rb") as f:
            return f.read()


def pack(first, second=None, gzip_first=False, gzip_second=False, labels_first=False):
    flags = (1 if gzip_first else 0) | (2 if gzip_second else 0) | (4 if second is None else 0) | (8 if labels_first else 0)
    return bytes([flags]) + struct.pack("<I", len(first)) + first + (second or b"")


def write(folder, name, content):
    os.makedirs(os.path.join(HERE, "corpus", folder), exist_ok=True)
    with open(os.path.join(HERE, "corpus", folder, name), "wb") as f:
        f.write(content)


def nifti_seeds():
    rng = np.random.default_rng(1)
    data = rng.standard_normal((2, 2, 2, 3)).astype(np.float32)
    labels = np.array([[[1, 1], [0, 2]], [[2, 2], [0, 1]]], np.int16)
    affine = np.eye(4)
    img1 = file_bytes(lambda p: nib.save(nib.Nifti1Image(data, affine), p), ".nii")
    lab1 = file_bytes(lambda p: nib.save(nib.Nifti1Image(labels, affine), p), ".nii")
    img2 = file_bytes(lambda p: nib.save(nib.Nifti2Image(data, affine, nib.Nifti2Header(endianness=">")), p), ".nii")
    lab2 = file_bytes(lambda p: nib.save(nib.Nifti2Image(labels.astype(np.float32), affine), p), ".nii")
    scaled = nib.Nifti1Image(np.round(data * 100).astype(np.int16), affine)
    scaled.header.set_slope_inter(0.01, 2.0)
    img3 = file_bytes(lambda p: nib.save(scaled, p), ".nii")
    write("nifti", "nifti1_pair", pack(img1, lab1))
    write("nifti", "nifti1_gzip", pack(img1, lab1, gzip_first=True, gzip_second=True))
    write("nifti", "nifti2_big_endian", pack(img2, lab2))
    write("nifti", "labels_first", pack(lab1, img3, labels_first=True))
    write("nifti", "no_labels", pack(img1))


def cifti_files():
    rng = np.random.default_rng(2)
    left = np.array([1, 1, 0, 1], bool)
    mask = np.zeros((2, 2, 1), bool)
    mask[0, 1, 0] = mask[1, 0, 0] = True
    brain = (cifti2.BrainModelAxis.from_mask(left, name="CortexLeft")
             + cifti2.BrainModelAxis.from_mask(mask, affine=np.eye(4), name="ThalamusLeft"))
    series = cifti2.SeriesAxis(0.0, 0.72, 4)
    dt = file_bytes(lambda p: cifti2.Cifti2Image(rng.standard_normal((4, len(brain))).astype(np.float32),
                                                 header=(series, brain)).to_filename(p), ".dtseries.nii")
    table = {0: ("???", (0, 0, 0, 0)), 1: ("a & b", (1, 0, 0, 1)), 2: ("c", (0, 1, 0, 1))}
    dl = file_bytes(lambda p: cifti2.Cifti2Image(np.array([[1, 2, 2, 1, 0]], np.float32),
                                                 header=(cifti2.LabelAxis(["m"], table), brain)).to_filename(p), ".dlabel.nii")
    parcels = cifti2.ParcelsAxis.from_brain_models([("left", brain[:2]), ("right \u00e9", brain[2:])])
    pt = file_bytes(lambda p: cifti2.Cifti2Image(rng.standard_normal((4, 2)).astype(np.float32),
                                                 header=(series, parcels)).to_filename(p), ".ptseries.nii")
    return dt, dl, pt


def xml_of(cifti_bytes):
    size = struct.unpack_from("<i", cifti_bytes, 544)[0]
    return cifti_bytes[552:544 + size].rstrip(b"\0")


def main():
    nifti_seeds()
    dt, dl, pt = cifti_files()
    write("cifti", "dense_pair", pack(dt, dl))
    write("cifti", "dense_pair_gzip", pack(dt, dl, gzip_second=True))
    write("cifti", "parcels", pack(pt))
    write("cifti", "labels_first", pack(dl, dt, labels_first=True))
    write("xml", "dtseries.xml", xml_of(dt))
    write("xml", "dlabel.xml", xml_of(dl))
    write("xml", "ptseries.xml", xml_of(pt))
    write("xml", "syntax.xml", b"\xef\xbb\xbf<?xml version='1.0' encoding='UTF-8'?><!-- c --><a x='&lt;&#65;&#x42;'>"
                               b"t<![CDATA[<&>]]><b/><?pi x?></a>")


if __name__ == "__main__":
    main()
