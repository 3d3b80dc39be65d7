#!/usr/bin/env python3
"""Regenerate the key reference in docs/configuration.md from the key table.

Runs `stormcharge init --reference` (through cargo) and replaces the text
between the <!-- keys:start --> and <!-- keys:end --> markers. A test fails
until the page matches the key table, so run this after adding a key.
"""
import pathlib
import subprocess

root = pathlib.Path(__file__).resolve().parent.parent
ref = subprocess.run(
    ["cargo", "run", "--release", "--quiet", "--", "init", "--reference"],
    cwd=root, check=True, capture_output=True, text=True,
).stdout
page = root / "docs" / "configuration.md"
doc = page.read_text()
start, end = "<!-- keys:start -->", "<!-- keys:end -->"
a = doc.index(start) + len(start)
b = doc.index(end)
page.write_text(doc[:a] + "\n" + ref + doc[b:])
print(f"updated {page}")
