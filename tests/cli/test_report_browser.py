"""The cohort report in a real browser: Debian's headless Chromium (package chromium,
installed by cmake/install-deps.sh --reference) loads the report at 1400 px wide and is
driven through the DevTools protocol over a pipe (--remote-debugging-pipe; Python's
standard library only). Checks: no console errors or exceptions, no script in the page,
every figure has a non-zero size, the expected sections are there, and the group curves
fill most of the height of the Euler characteristic panel (readable on their own scale,
not squashed by the null curve). A full-page screenshot is kept in the build folder:
$CRITPLEX_BINARY_DIR/test-artifacts/report_1400px.png.

By default the report is that of a small invented study (the simulated sleep
laboratory: `simulate --subjects 6 --regions 40 --frames 300`, its cohort config,
`compare --covariates age`); set CRITPLEX_REPORT_DIR to a finished results folder (e.g.
the demo's) to check that report instead."""
import base64
import json
import os
import shutil
import subprocess
import tempfile
import time
import unittest

CLI = os.environ["CRITPLEX_CLI"]
ARTIFACTS = os.path.join(os.environ.get("CRITPLEX_BINARY_DIR", tempfile.gettempdir()), "test-artifacts")
WIDTH = 1400
SECTIONS = ["euler", "null-curve", "permutation-nulls", "methods", "quality", "provenance"]


def run(*args):
    p = subprocess.run([CLI, *args], capture_output=True, text=True)
    if p.returncode != 0:
        raise AssertionError(f"critplex {' '.join(args)} failed ({p.returncode}):\n{p.stdout}\n{p.stderr}")
    return p


class Browser:
    """Chromium with the DevTools protocol on file descriptors 3 (commands in) and 4
    (replies out), messages separated by NUL bytes."""

    def __init__(self, profile):
        exe = shutil.which("chromium") or shutil.which("chromium-browser")
        if not exe:
            raise AssertionError("chromium is not installed: run cmake/install-deps.sh --reference")
        to_chrome_r, self.to_chrome = os.pipe()
        self.from_chrome, from_chrome_w = os.pipe()
        cmd = (f"exec '{exe}' --headless --no-sandbox --disable-gpu --hide-scrollbars --no-first-run "
               f"--user-data-dir='{profile}' --remote-debugging-pipe about:blank "
               f"3<&{to_chrome_r} 4>&{from_chrome_w}")
        self.proc = subprocess.Popen(["bash", "-c", cmd], pass_fds=(to_chrome_r, from_chrome_w),
                                     stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        os.close(to_chrome_r)
        os.close(from_chrome_w)
        self.buffer = b""
        self.next_id = 0
        self.events = []

    def _read_message(self, deadline):
        while b"\0" not in self.buffer:
            if time.time() > deadline:
                raise AssertionError("chromium did not answer in time")
            chunk = os.read(self.from_chrome, 1 << 16)
            if not chunk:
                raise AssertionError("chromium closed the pipe")
            self.buffer += chunk
        message, self.buffer = self.buffer.split(b"\0", 1)
        return json.loads(message)

    def send(self, method, params=None, session=None, timeout=30):
        self.next_id += 1
        message = {"id": self.next_id, "method": method, "params": params or {}}
        if session:
            message["sessionId"] = session
        os.write(self.to_chrome, json.dumps(message).encode() + b"\0")
        deadline = time.time() + timeout
        while True:
            reply = self._read_message(deadline)
            if reply.get("id") == self.next_id:
                if "error" in reply:
                    raise AssertionError(f"{method}: {reply['error']}")
                return reply.get("result", {})
            self.events.append(reply)

    def wait_for(self, event, timeout=30):
        deadline = time.time() + timeout
        for e in self.events:
            if e.get("method") == event:
                return e
        while True:
            e = self._read_message(deadline)
            self.events.append(e)
            if e.get("method") == event:
                return e

    def close(self):
        try:
            self.send("Browser.close", timeout=10)
        except AssertionError:
            pass
        try:
            self.proc.wait(timeout=10)
        except subprocess.TimeoutExpired:
            self.proc.kill()
        os.close(self.to_chrome)
        os.close(self.from_chrome)


PROBE = """JSON.stringify({
  scripts: document.querySelectorAll('script').length,
  width: document.documentElement.clientWidth,
  height: document.documentElement.scrollHeight,
  sections: Array.from(document.querySelectorAll('[id]')).map(e => e.id),
  headings: Array.from(document.querySelectorAll('h2')).map(e => e.textContent),
  figures: Array.from(document.querySelectorAll('svg.plot')).map(s => {
    const r = s.getBoundingClientRect();
    return {label: s.getAttribute('aria-label'), width: r.width, height: r.height};
  }),
  chi: (() => {
    const svg = document.querySelector('svg.plot');
    const area = svg.querySelector('.plot-area').getBoundingClientRect();
    const means = Array.from(svg.querySelectorAll('path[stroke-width="2.2"]')).map(p => {
      const r = p.getBoundingClientRect();
      return {top: r.top, bottom: r.bottom};
    });
    return {area: area.height, top: area.top, means: means};
  })()
})"""


class ReportInBrowser(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        cls.tmp = tempfile.TemporaryDirectory()
        results = os.environ.get("CRITPLEX_REPORT_DIR")
        if not results:
            study = os.path.join(cls.tmp.name, "study")
            results = os.path.join(cls.tmp.name, "results")
            run("simulate", "--out", study, "--subjects", "6", "--regions", "40", "--frames", "300", "--seed", "3",
                "--effect", "0.8")
            run("cohort", os.path.join(study, "manifest.tsv"), "--config", os.path.join(study, "cohort_config.json"),
                "--out", results)
            run("compare", results, "--covariates", "age")
        run("report", results)
        cls.report = os.path.join(results, "report.html")
        browser = Browser(os.path.join(cls.tmp.name, "profile"))
        try:
            target = browser.send("Target.createTarget", {"url": "about:blank"})["targetId"]
            session = browser.send("Target.attachToTarget", {"targetId": target, "flatten": True})["sessionId"]
            for method in ("Runtime.enable", "Log.enable", "Page.enable"):
                browser.send(method, session=session)
            browser.send("Emulation.setDeviceMetricsOverride",
                         {"width": WIDTH, "height": 1000, "deviceScaleFactor": 1, "mobile": False}, session=session)
            browser.send("Page.navigate", {"url": "file://" + os.path.abspath(cls.report)}, session=session)
            browser.wait_for("Page.loadEventFired")
            probe = browser.send("Runtime.evaluate", {"expression": PROBE, "returnByValue": True}, session=session)
            cls.page = json.loads(probe["result"]["value"])
            shot = browser.send("Page.captureScreenshot",
                                {"format": "png", "captureBeyondViewport": True,
                                 "clip": {"x": 0, "y": 0, "width": WIDTH, "height": cls.page["height"], "scale": 1}},
                                session=session, timeout=60)
            os.makedirs(ARTIFACTS, exist_ok=True)
            cls.screenshot = os.path.join(ARTIFACTS, "report_1400px.png")
            with open(cls.screenshot, "wb") as f:
                f.write(base64.b64decode(shot["data"]))
            cls.events = list(browser.events)
        finally:
            browser.close()

    @classmethod
    def tearDownClass(cls):
        cls.tmp.cleanup()

    def test_no_console_errors_and_no_script(self):
        errors = [e for e in self.events
                  if e.get("method") == "Runtime.exceptionThrown"
                  or (e.get("method") == "Runtime.consoleAPICalled" and e["params"].get("type") in ("error", "assert"))
                  or (e.get("method") == "Log.entryAdded" and e["params"]["entry"].get("level") == "error")]
        self.assertEqual(errors, [])
        self.assertEqual(self.page["scripts"], 0)

    def test_every_figure_has_a_size(self):
        self.assertEqual(self.page["width"], WIDTH)
        self.assertGreaterEqual(len(self.page["figures"]), 8)
        for fig in self.page["figures"]:
            self.assertGreater(fig["width"], 100, fig["label"])
            self.assertGreater(fig["height"], 100, fig["label"])

    def test_expected_sections(self):
        for section in SECTIONS:
            self.assertIn(section, self.page["sections"])
        for heading in ["Euler characteristic along the filtration", "Group tests", "Methods", "Quality per subject",
                        "Provenance", "Permutation nulls of the headline tests"]:
            self.assertIn(heading, self.page["headings"])

    def test_group_curves_readable_on_their_own_scale(self):
        # The group mean lines of the chi panel span most of its plotting height: the null
        # curve, drawn in its own panel, no longer sets this axis.
        chi = self.page["chi"]
        self.assertGreaterEqual(len(chi["means"]), 2)
        top = min(m["top"] for m in chi["means"])
        bottom = max(m["bottom"] for m in chi["means"])
        self.assertGreater((bottom - top) / chi["area"], 0.6)

    def test_screenshot_kept(self):
        with open(self.screenshot, "rb") as f:
            head = f.read(24)
        self.assertEqual(head[:8], b"\x89PNG\r\n\x1a\n")
        width = int.from_bytes(head[16:20], "big")
        self.assertEqual(width, WIDTH)


if __name__ == "__main__":
    unittest.main(verbosity=2)
