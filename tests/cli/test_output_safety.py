"""Output safety of the atomic writer (library) and the command line (issue 13): an output
that is an input of the same run is refused; a FIFO, device or folder is never replaced; a
symbolic link is followed (its target replaced, the link kept); missing output folders are
created; a path through a file is refused naming it; stale temporaries of dead processes
are removed; SIGINT during a write leaves no temporary file."""
import os
import signal
import stat
import subprocess
import tempfile
import time
import unittest

CLI = os.environ["CRITPLEX_CLI"]


def read(path):
    with open(path) as f:
        return f.read()


def series_text(frames, regions):
    rows = ["\t".join(f"r{j}" for j in range(regions))]
    for t in range(frames):
        rows.append("\t".join(str(((t * 7 + j * 13 + (t * j) % 5) % 17) + 0.25 * (j % 4)) for j in range(regions)))
    return "\n".join(rows) + "\n"


class OutputSafety(unittest.TestCase):
    def setUp(self):
        self.tmp = tempfile.TemporaryDirectory()
        self.dir = self.tmp.name
        self.series = self.path("series.tsv")
        with open(self.series, "w") as f:
            f.write(series_text(30, 5))

    def tearDown(self):
        self.tmp.cleanup()

    def path(self, *parts):
        return os.path.join(self.dir, *parts)

    def connect(self, out, *extra, input_path=None):
        return subprocess.run([CLI, "connect", input_path or self.series, "--out", out, *extra],
                              capture_output=True, text=True)

    def temporaries(self, folder=None):
        found = []
        for root, _, files in os.walk(folder or self.dir):
            found += [os.path.join(root, f) for f in files if ".tmp-" in f]
        return found

    def test_output_is_the_input(self):
        before = read(self.series)
        p = self.connect(self.series)
        self.assertEqual(p.returncode, 2, p.stderr)
        self.assertIn("is the input", p.stderr)
        os.symlink(self.series, self.path("alias.tsv"))  # another name for the same file
        p = self.connect(self.path("alias.tsv"))
        self.assertEqual(p.returncode, 2, p.stderr)
        self.assertIn("is the input", p.stderr)
        self.assertEqual(read(self.series), before)
        m = self.path("m.tsv")
        self.assertEqual(self.connect(m).returncode, 0)
        p = subprocess.run([CLI, "sweep", m, "--out", m], capture_output=True, text=True)
        self.assertEqual(p.returncode, 2, p.stderr)
        self.assertIn("is the input", p.stderr)

    def test_subject_output_is_its_input(self):
        # The series sits where the subject's connectivity output would go.
        out = self.path("out")
        os.mkdir(out)
        series = os.path.join(out, "sub-s1_connectivity.tsv")
        with open(series, "w") as f:
            f.write(series_text(120, 5))
        before = read(series)
        p = subprocess.run([CLI, "subject", "--timeseries", series, "--id", "s1", "--out", out],
                           capture_output=True, text=True)
        self.assertNotEqual(p.returncode, 0)
        self.assertIn("is the input", p.stderr)
        self.assertEqual(read(series), before)
        self.assertEqual(os.listdir(out), ["sub-s1_connectivity.tsv"])

    def test_fifo_is_refused_and_kept(self):
        fifo = self.path("pipe.tsv")
        os.mkfifo(fifo)
        p = self.connect(fifo)
        self.assertNotEqual(p.returncode, 0)
        self.assertIn("not a regular file", p.stderr)
        self.assertIn("pipe.tsv", p.stderr)
        self.assertTrue(stat.S_ISFIFO(os.lstat(fifo).st_mode), "the FIFO must stay a FIFO")
        m = self.path("m.tsv")
        self.assertEqual(self.connect(m).returncode, 0)
        p = subprocess.run([CLI, "sweep", m, "--out", fifo], capture_output=True, text=True)
        self.assertNotEqual(p.returncode, 0)
        self.assertIn("not a regular file", p.stderr)
        self.assertTrue(stat.S_ISFIFO(os.lstat(fifo).st_mode))
        self.assertEqual(self.temporaries(), [])

    def test_device_is_refused_and_kept(self):
        device = self.path("null.tsv")
        try:
            os.mknod(device, 0o666 | stat.S_IFCHR, os.makedev(1, 3))  # a copy of /dev/null's node
        except PermissionError:
            self.skipTest("creating a device node needs root")
        p = self.connect(device)
        self.assertNotEqual(p.returncode, 0)
        self.assertIn("not a regular file", p.stderr)
        self.assertTrue(stat.S_ISCHR(os.lstat(device).st_mode), "the device node must stay")

    def test_folder_as_output_file(self):
        os.mkdir(self.path("taken.tsv"))
        p = subprocess.run([CLI, "sweep", self.series, "--out", self.path("taken.tsv")], capture_output=True, text=True)
        self.assertNotEqual(p.returncode, 0)

    def test_symlink_is_followed(self):
        target = self.path("real.tsv")
        with open(target, "w") as f:
            f.write("old\n")
        link = self.path("link.tsv")
        os.symlink(target, link)
        p = self.connect(link)
        self.assertEqual(p.returncode, 0, p.stderr)
        self.assertTrue(os.path.islink(link), "the link stays a link")
        self.assertTrue(read(target).startswith("name\t"), "its target holds the matrix")
        dangling = self.path("dangling.tsv")
        os.symlink(self.path("nowhere", "x.tsv"), dangling)
        p = self.connect(dangling)
        self.assertNotEqual(p.returncode, 0)
        self.assertIn("symbolic link to a missing", p.stderr)

    def test_missing_folders_are_created(self):
        p = self.connect(self.path("new", "deeper", "m.tsv"))
        self.assertEqual(p.returncode, 0, p.stderr)
        self.assertTrue(os.path.isfile(self.path("new", "deeper", "m.tsv")))
        p = self.connect(self.path("conn") + "/")
        self.assertEqual(p.returncode, 0, p.stderr)
        self.assertEqual(os.listdir(self.path("conn")), ["series_connectivity.tsv"])
        m = self.path("m.tsv")
        self.assertEqual(self.connect(m).returncode, 0)
        p = subprocess.run([CLI, "sweep", m, "--out", self.path("curves", "c.tsv")], capture_output=True, text=True)
        self.assertEqual(p.returncode, 0, p.stderr)
        self.assertTrue(os.path.isfile(self.path("curves", "c.tsv")))

    def test_path_through_a_file(self):
        with open(self.path("plain"), "w") as f:
            f.write("x")
        p = self.connect(self.path("plain", "m.tsv"))
        self.assertNotEqual(p.returncode, 0)
        self.assertIn("is a file, not a folder", p.stderr)
        self.assertIn("plain", p.stderr)

    def test_stale_temporaries_are_removed(self):
        dead = subprocess.Popen(["true"])
        dead.wait()  # a process id that no longer runs
        stale = self.path(f"m.tsv.tmp-{dead.pid}-3")
        alive = self.path(f"m.tsv.tmp-{os.getpid()}-0")  # a running process's file is kept
        for name in (stale, alive):
            with open(name, "w") as f:
                f.write("partial")
        p = self.connect(self.path("m.tsv"))
        self.assertEqual(p.returncode, 0, p.stderr)
        self.assertFalse(os.path.exists(stale))
        self.assertTrue(os.path.exists(alive))

    def test_interrupt_removes_the_temporary(self):
        # A large output so that its write is long enough to be caught in the act.
        big = self.path("big.tsv")
        with open(big, "w") as f:
            f.write(series_text(12, 1500))
        caught = 0
        for attempt in range(6):
            out = self.path(f"big_{attempt}.tsv")
            proc = subprocess.Popen([CLI, "connect", big, "--out", out], stderr=subprocess.DEVNULL)
            deadline = time.monotonic() + 30
            while proc.poll() is None and time.monotonic() < deadline:
                if self.temporaries():
                    proc.send_signal(signal.SIGINT)
                    break
            code = proc.wait(timeout=60)
            if code == -signal.SIGINT:
                caught += 1
                self.assertFalse(os.path.exists(out))
            self.assertEqual(self.temporaries(), [], "attempt %d left a temporary file" % attempt)
            if caught >= 2:
                break
        self.assertGreater(caught, 0, "no write was interrupted (the test could not check anything)")


if __name__ == "__main__":
    unittest.main()
