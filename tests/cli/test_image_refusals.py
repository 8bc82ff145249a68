"""`critplex connect` on hostile and broken images (NIfTI-1, NIfTI-2, CIFTI-2): every
refusal names the file and the header field or XML element, exits non-zero, leaves no
output, and stays under 200 MB of memory (measured with /usr/bin/time -v), because sizes
declared by a header are checked against the file and the memory budget before anything
is allocated. Valid files come from nibabel (Debian python3-nibabel) and are then broken
on purpose at the header offsets of the NIfTI-1 and NIfTI-2 layouts (nifti1.h, nifti2.h)."""
import gzip
import os
import re
import struct
import subprocess
import tempfile
import unittest

import numpy as np

CLI = os.environ["CRITPLEX_CLI"]
TIME = "/usr/bin/time"
MAX_RSS_KB = 200 * 1024


def patch(data: bytes, offset: int, fmt: str, *values) -> bytes:
    b = bytearray(data)
    struct.pack_into(fmt, b, offset, *values)
    return bytes(b)


class ImageRefusals(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        import nibabel as nib
        from nibabel import cifti2
        cls.tmp = tempfile.TemporaryDirectory()
        d = cls.tmp.name
        rng = np.random.default_rng(5)
        data = rng.standard_normal((4, 4, 3, 12)).astype(np.float32)
        labels = np.zeros((4, 4, 3), np.int16)
        labels[:2] = 1
        labels[2:] = 2
        cls.image = os.path.join(d, "bold.nii")
        nib.save(nib.Nifti1Image(data, np.eye(4)), cls.image)
        cls.atlas = os.path.join(d, "atlas.nii")
        nib.save(nib.Nifti1Image(labels, np.eye(4)), cls.atlas)
        cls.image2 = os.path.join(d, "bold2.nii")
        nib.save(nib.Nifti2Image(data, np.eye(4)), cls.image2)
        with open(cls.image, "rb") as f:
            cls.image_bytes = f.read()
        with open(cls.image2, "rb") as f:
            cls.image2_bytes = f.read()
        with open(cls.atlas, "rb") as f:
            cls.atlas_bytes = f.read()
        with_ext = nib.Nifti1Image(labels, np.eye(4))
        with_ext.header.extensions.append(nib.nifti1.Nifti1Extension("comment", b"made for a test"))
        nib.save(with_ext, os.path.join(d, "atlas_ext.nii"))
        with open(os.path.join(d, "atlas_ext.nii"), "rb") as f:
            cls.atlas_ext_bytes = f.read()
        brain = cifti2.BrainModelAxis.from_mask(np.ones(6, bool), name="CortexLeft")
        series = cifti2.SeriesAxis(0, 0.72, 10)
        cls.ptseries = os.path.join(d, "p.ptseries.nii")
        parcels = cifti2.ParcelsAxis.from_brain_models([("a", brain[:3]), ("b", brain[3:])])
        cifti2.Cifti2Image(rng.standard_normal((10, 2)).astype(np.float32), header=(series, parcels)).to_filename(cls.ptseries)
        with open(cls.ptseries, "rb") as f:
            cls.pt_bytes = f.read()

    @classmethod
    def tearDownClass(cls):
        cls.tmp.cleanup()

    def write(self, name, content, compress=False):
        path = os.path.join(self.tmp.name, name)
        with open(path, "wb") as f:
            f.write(gzip.compress(content) if compress else content)
        return path

    def refuse(self, image, labels, *needles):
        out = os.path.join(self.tmp.name, "matrix.tsv")
        cmd = [TIME, "-v", CLI, "connect", image, "--out", out]
        if labels:
            cmd += ["--labels", labels]
        p = subprocess.run(cmd, capture_output=True, text=True, timeout=120)
        self.assertNotEqual(p.returncode, 0, p.stderr)
        for needle in needles:
            self.assertIn(needle, p.stderr)
        self.assertFalse(os.path.exists(out))
        rss = int(re.search(r"Maximum resident set size \(kbytes\): (\d+)", p.stderr).group(1))
        self.assertLess(rss, MAX_RSS_KB, "peak memory while refusing")
        return rss

    def test_nifti_headers_that_lie(self):
        a, i, i2 = self.atlas_bytes, self.image_bytes, self.image2_bytes
        huge_grid = patch(a, 40, "<8h", 3, 32767, 32767, 32767, 1, 1, 1, 1)[:480]  # a 480-byte label image
        cases = [
            ("grid.nii", huge_grid, False, True, ["grid.nii", "header fields dim and vox_offset", "32767x32767x32767"]),
            # compressed, the sizes cannot be checked up front: the reader holds no more than it decodes
            ("grid.nii.gz", huge_grid, True, True, ["grid.nii.gz", "the file ends inside the labels"]),
            ("offset.nii", patch(a, 108, "<f", 1e30), False, True, ["offset.nii", "vox_offset", "1.0000000150474662e+30"]),
            ("offset2.nii", patch(i2, 168, "<q", 1 << 40), False, False, ["offset2.nii", "from byte 1099511627776), but the file has"]),
            ("esize.nii", patch(self.atlas_ext_bytes, 352, "<i", 0x7FFFFFF0), False, True,
             ["esize.nii", "extension 1 esize: 2147483632"]),
            ("frames.nii", patch(i, 40, "<8h", 4, 4, 4, 3, 32767, 32767, 1, 1), False, False, ["frames.nii", "header fields dim and vox_offset"]),
            # NIfTI-2 gzip claiming 2^40 frames: the regional series would pass the budget
            ("frames2.nii.gz", patch(i2, 16, "<8q", 4, 4, 4, 3, 1 << 40, 1, 1, 1), True, False,
             ["frames2.nii.gz", "past the image memory budget of 1024 MiB"]),
            ("short.nii.gz", i[:-200], True, False, ["short.nii.gz", "the file ends inside frame 11 of 12"]),
        ]
        # an image on the same huge grid, so that the labels are read
        huge_image = self.write("huge_bold.nii.gz", patch(i, 40, "<8h", 4, 32767, 32767, 32767, 2, 1, 1, 1), True)
        for name, content, compress, as_labels, needles in cases:
            with self.subTest(name=name):
                path = self.write(name, content, compress)
                image = (huge_image if name == "grid.nii.gz" else self.image) if as_labels else path
                self.refuse(image, path if as_labels else self.atlas, *needles)

    def test_label_values(self):
        import nibabel as nib
        labels = np.ones((4, 4, 3), np.float32)
        labels[3, 2, 1] = 1e30
        path = os.path.join(self.tmp.name, "big_label.nii")
        nib.save(nib.Nifti1Image(labels, np.eye(4)), path)
        self.refuse(self.image, path, "big_label.nii", "voxel (3, 2, 1) holds 1.0000000150474662e+30, not an integer label")
        wide = np.ones((4, 4, 3), np.int64)
        wide[0, 1, 2] = 1 << 62
        path = os.path.join(self.tmp.name, "wide_label.nii")
        nib.save(nib.Nifti1Image(wide, np.eye(4), dtype=np.int64), path)
        self.refuse(self.image, path, "wide_label.nii", "voxel (0, 1, 2) holds 4611686018427387904")

    def test_cifti_headers_that_lie(self):
        pt = self.pt_bytes
        start = 544 + 8
        end = pt.index(b"</CIFTI>") + len(b"</CIFTI>")
        xml = pt[start:end].decode()
        size = struct.unpack_from("<i", pt, 544)[0]

        def with_xml(text):
            body = text.encode()
            body += b"\0" * ((-(len(body) + 8)) % 16)
            data = pt[544 + size:]
            head = patch(pt[:544], 168, "<q", 544 + 8 + len(body))
            return head + struct.pack("<ii", len(body) + 8, 32) + body + data

        deep = xml.replace("<Matrix>", "<Matrix>" + "<MetaData>" * 100000, 1)
        laughs = ('<?xml version="1.0"?><!DOCTYPE CIFTI [<!ENTITY a "aaaaaaaaaa"><!ENTITY b "&a;&a;&a;&a;&a;&a;">]>'
                  + xml[xml.index("<CIFTI"):])
        many = xml.replace('NumberOfSeriesPoints="10"', 'NumberOfSeriesPoints="1099511627776"')
        cases = [
            ("deep.ptseries.nii", with_xml(deep), False, ["deep.ptseries.nii", "nested more than 32 deep"]),
            ("laughs.ptseries.nii", with_xml(laughs), False, ["laughs.ptseries.nii", "DOCTYPE"]),
            ("esize.ptseries.nii", patch(pt, 544, "<i", 64 << 20), False, ["esize.ptseries.nii", "extension 1 esize"]),
            ("points.ptseries.nii", patch(with_xml(many), 16 + 8 * 5, "<q", 1 << 40), False,
             ["points.ptseries.nii", "but the file has"]),
            ("points.ptseries.nii.gz", patch(with_xml(many), 16 + 8 * 5, "<q", 1 << 40), True,
             ["points.ptseries.nii.gz", "past the image memory budget"]),
            ("dims.ptseries.nii", patch(pt, 16 + 8 * 5, "<q", 5), False, ["dims.ptseries.nii", "NIfTI dim is [6 1 1 1 1 5 2 1]"]),
        ]
        for name, content, compress, needles in cases:
            with self.subTest(name=name):
                self.refuse(self.write(name, content, compress), None, *needles)


if __name__ == "__main__":
    unittest.main()
