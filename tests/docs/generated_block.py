"""A generated block inside a hand-written Markdown page, between two marker lines."""
import sys


def splice(document, block, begin, end):
    """The document with the text from `begin` to `end` (markers included) replaced by block."""
    start, stop = document.index(begin), document.index(end) + len(end)
    return document[:start] + block + document[stop:]


def update(path, block, begin, end):
    """Rewrite the block in path; with --check on the command line, exit 1 when it is stale."""
    with open(path, encoding="utf-8") as f:
        old = f.read()
    new = splice(old, block, begin, end)
    if "--check" in sys.argv:
        sys.exit(0 if new == old else 1)
    with open(path, "w", encoding="utf-8") as f:
        f.write(new)
