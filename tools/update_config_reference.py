#!/usr/bin/env python3
"""Regenerate the generated references of the docs.

- docs/configuration.md: `stormcharge init --reference` between the
  <!-- keys:start --> and <!-- keys:end --> markers (from the key table);
- docs/output.md: `stormcharge init --output-reference` between the
  <!-- outputs:start --> and <!-- outputs:end --> markers (from the output
  registry).

Tests fail until the pages match, so run this after adding a key or an
output variable.
"""
import pathlib
import subprocess

root = pathlib.Path(__file__).resolve().parent.parent


def regenerate(flag, page_name, marker):
    ref = subprocess.run(
        ["cargo", "run", "--release", "--quiet", "--", "init", flag],
        cwd=root, check=True, capture_output=True, text=True,
    ).stdout
    page = root / "docs" / page_name
    doc = page.read_text()
    start, end = f"<!-- {marker}:start -->", f"<!-- {marker}:end -->"
    a = doc.index(start) + len(start)
    b = doc.index(end)
    page.write_text(doc[:a] + "\n" + ref + doc[b:])
    print(f"updated {page}")


regenerate("--reference", "configuration.md", "keys")
regenerate("--output-reference", "output.md", "outputs")
