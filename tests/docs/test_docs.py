"""The documentation against the code it describes (ctest label docs).

- every relative link (and in-page anchor) in README.md and docs/*.md resolves;
- every flag of `critplex COMMAND --help` has a row in docs/cli.md, and every flag there
  exists;
- every key of the parser's option tables is in docs/options.md, every key there is in
  the tables, and the generated tables are current. The tables come from `critplex
  options --format json` (the catalogue the parsers read), cross-checked against a plain
  scan of the OptionSection tables in core/**.cpp so no table is left out of it;
- the tutorial's fenced bash blocks run, in order, in a scratch folder, and succeed.
"""
import glob
import os
import re
import subprocess
import sys
import tempfile
import unittest

SOURCE = os.environ.get("CRITPLEX_SOURCE_DIR", os.path.dirname(os.path.dirname(os.path.dirname(
    os.path.abspath(__file__)))))
CLI = os.environ.get("CRITPLEX_CLI", os.path.join(SOURCE, "build", "plugins", "cli", "critplex"))
sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import gen_capi  # noqa: E402
import gen_options  # noqa: E402


def read(path):
    with open(path, encoding="utf-8") as f:
        return f.read()


def doc_files():
    return [os.path.join(SOURCE, "README.md")] + sorted(glob.glob(os.path.join(SOURCE, "docs", "*.md")))


def without_code(text):
    """Markdown with fenced blocks and inline code removed (links there are not links)."""
    text = re.sub(r"^```.*?^```", "", text, flags=re.S | re.M)
    return re.sub(r"`[^`\n]*`", "", text)


def slug(heading):
    """The anchor a code host gives a heading: lower case, punctuation dropped, spaces to -."""
    text = re.sub(r"`", "", heading.strip().lower())
    text = re.sub(r"[^\w\- ]", "", text)
    return text.replace(" ", "-")


def anchors(path):
    return {slug(h) for h in re.findall(r"^#{1,6} (.+)$", re.sub(r"^```.*?^```", "", read(path), flags=re.S | re.M),
                                        flags=re.M)}


class Links(unittest.TestCase):
    def test_relative_links_resolve(self):
        bad = []
        for path in doc_files():
            for target in re.findall(r"\]\(([^)\s]+)\)", without_code(read(path))):
                if re.match(r"[a-z]+:", target):
                    continue  # web and mail addresses are not checked here
                file_part, _, anchor = target.partition("#")
                resolved = os.path.normpath(os.path.join(os.path.dirname(path), file_part)) if file_part else path
                if not os.path.exists(resolved):
                    bad.append(f"{os.path.relpath(path, SOURCE)}: {target} (no such file)")
                elif anchor and resolved.endswith(".md") and anchor not in anchors(resolved):
                    bad.append(f"{os.path.relpath(path, SOURCE)}: {target} (no such heading)")
        self.assertEqual(bad, [], "links that do not resolve")

    def test_readme_shape(self):
        # the acceptance: under 200 lines, the job first, one caution box
        text = read(os.path.join(SOURCE, "README.md"))
        self.assertLess(len(text.splitlines()), 200)
        self.assertEqual(len(re.findall(r"^> \*\*Caution", text, flags=re.M)), 1)
        first = text.split("\n\n")[1]
        self.assertIn("brain", first)

    def test_no_missing_methods_file(self):
        # docs/methods.md replaced a METHODS.md the project never had
        hits = subprocess.run(["grep", "-rIl", "--exclude-dir=build*", "--exclude-dir=.git", "METHODS.md", SOURCE],
                              capture_output=True, text=True).stdout.split()
        self.assertEqual([h for h in hits if not h.endswith("test_docs.py")], [])


def help_text(*args):
    run = subprocess.run([CLI, *args, "--help"], capture_output=True, text=True)
    return run.stdout + run.stderr


def commands():
    listing = help_text().split("commands:")[1].split("\n\n")[0]
    return re.findall(r"^  ([a-z]+) ", listing, flags=re.M)


def help_flags(command):
    return set(re.findall(r"^  (--[a-z][a-z0-9-]*)", help_text(command), flags=re.M))


def cli_doc_sections():
    """{command: set of flags in the rows of its section} from docs/cli.md."""
    text = read(os.path.join(SOURCE, "docs", "cli.md"))
    out = {}
    for part in re.split(r"^## ", text, flags=re.M)[1:]:
        m = re.match(r"`?critplex ([a-z]+)", part)
        if m:
            out[m.group(1)] = set(re.findall(r"^\| `(--[a-z][a-z0-9-]*)", part, flags=re.M))
    return out


class CommandLine(unittest.TestCase):
    def test_every_flag_documented_and_every_documented_flag_exists(self):
        docs = cli_doc_sections()
        names = commands()
        self.assertGreater(len(names), 5)
        for command in names:
            with self.subTest(command=command):
                self.assertIn(command, docs, f"docs/cli.md has no section '## critplex {command}'")
                flags = help_flags(command)
                self.assertEqual(sorted(flags - docs[command]), [], "flags missing from docs/cli.md")
                self.assertEqual(sorted(docs[command] - flags), [], "flags in docs/cli.md that --help lacks")
        self.assertEqual(sorted(set(docs) - set(names)), [], "sections of docs/cli.md for commands that do not exist")


def scanned_tables():
    """{section name: [keys]} from a plain scan of the OptionSection tables in core."""
    tables = {}
    for path in glob.glob(os.path.join(SOURCE, "core", "**", "*.cpp"), recursive=True):
        text = read(path)
        starts = [m for m in re.finditer(r"OptionSection\s+\w*\s*\{\s*\"([^\"]+)\"", text)]
        for i, m in enumerate(starts):
            end = starts[i + 1].start() if i + 1 < len(starts) else len(text)
            tables[m.group(1)] = re.findall(r"\.key\s*=\s*\"([^\"]+)\"", text[m.end():end])
    return tables


def documented_keys(text):
    block = text[text.index(gen_options.BEGIN):text.index(gen_options.END)]
    out = {}
    for part in re.split(r"^### ", block, flags=re.M)[1:]:
        name = re.match(r"`([^`]+)`", part).group(1)
        out[name] = re.findall(r"^\| `([^`]+)` \|", part, flags=re.M)
    return out


class Options(unittest.TestCase):
    def setUp(self):
        self.schema = gen_options.load_schema(CLI)
        self.keys = {s["name"]: [k["key"] for k in s["keys"]] for s in self.schema}

    def test_schema_covers_every_table_in_core(self):
        self.assertEqual(scanned_tables(), self.keys)

    def test_every_key_documented_and_every_documented_key_exists(self):
        documented = documented_keys(read(os.path.join(SOURCE, "docs", "options.md")))
        missing = sorted(f"{s}.{k}" for s, keys in self.keys.items() for k in keys if k not in documented.get(s, []))
        extra = sorted(f"{s}.{k}" for s, keys in documented.items() for k in keys if k not in self.keys.get(s, []))
        self.assertEqual(missing, [], "option keys missing from docs/options.md")
        self.assertEqual(extra, [], "keys in docs/options.md that no table has")

    def test_generated_tables_are_current(self):
        text = read(os.path.join(SOURCE, "docs", "options.md"))
        self.assertEqual(text, gen_options.splice(text, gen_options.render(self.schema)),
                         "docs/options.md is stale: run /usr/bin/python3 tests/docs/gen_options.py BUILD_DIR")


class CInterface(unittest.TestCase):
    def test_every_call_in_the_reference_and_current(self):
        header = read(gen_capi.HEADER)
        declared = set(re.findall(r"CPX_API[^;(]*?\b(cpx_\w+)\s*\(", header))
        text = read(os.path.join(SOURCE, "docs", "c-api.md"))
        listed = set(re.findall(r"^- `(cpx_\w+)`", text, flags=re.M))
        self.assertGreater(len(declared), 40)
        self.assertEqual(sorted(declared - listed), [], "calls missing from docs/c-api.md")
        self.assertEqual(sorted(listed - declared), [], "calls in docs/c-api.md that the header lacks")
        self.assertEqual(text, gen_capi.splice(text, gen_capi.render(gen_capi.sections(header))),
                         "docs/c-api.md is stale: run /usr/bin/python3 tests/docs/gen_capi.py")


class Citation(unittest.TestCase):
    def test_citation_file_has_the_required_fields(self):
        # reference: Citation File Format 1.2.0 requires cff-version, message, title and
        # authors (each a person with family-names or an entity with name); from memory of
        # the format's schema, no validator is packaged for this Debian.
        text = read(os.path.join(SOURCE, "CITATION.cff"))
        self.assertRegex(text, r'(?m)^cff-version: "?1\.2\.0"?$')
        for field in ("message", "title", "authors"):
            self.assertRegex(text, r"(?m)^" + field + ":")
        self.assertRegex(text, r"(?m)^  - (name|family-names): ")
        version = re.search(r"project\(critplex VERSION (\S+)", read(os.path.join(SOURCE, "CMakeLists.txt"))).group(1)
        self.assertRegex(text, r'(?m)^version: "?' + re.escape(version) + '"?$', "CITATION.cff version differs from CMake's")


def bash_blocks(path):
    return re.findall(r"^```bash\n(.*?)^```", read(path), flags=re.S | re.M)


class Tutorial(unittest.TestCase):
    def test_tutorial_runs(self):
        blocks = bash_blocks(os.path.join(SOURCE, "docs", "tutorial.md"))
        self.assertGreater(len(blocks), 3)
        env = dict(os.environ, PATH=os.path.dirname(os.path.abspath(CLI)) + os.pathsep + os.environ["PATH"])
        with tempfile.TemporaryDirectory() as scratch:
            # One shell for all blocks, so folders and variables carry over as for a reader.
            script = "set -euo pipefail\n" + "\n".join(
                f"echo '--- tutorial block {i + 1}' >&2\n{b}" for i, b in enumerate(blocks))
            run = subprocess.run(["bash", "-c", script], cwd=scratch, env=env, capture_output=True, text=True,
                                 timeout=100)
            self.assertEqual(run.returncode, 0, run.stderr[-3000:])
            self.assertTrue(os.path.exists(os.path.join(scratch, "results", "report.html")))


if __name__ == "__main__":
    unittest.main()
