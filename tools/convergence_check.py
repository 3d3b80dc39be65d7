#!/usr/bin/env python3
"""Run `stormcharge converge` on shipped configurations and check the
convergence targets of docs/numerics.md ("Targets not met") in one table.

Usage:
    tools/convergence_check.py [--binary PATH] [--levels N] [--set KEY=VALUE ...] [CONFIG ...]

`--set` passes overrides to every `converge` (a variant of a storm, say
`--set updraft.peak_speed=14`). Without CONFIG every configs/*.toml is checked (a sweep configuration is
checked through its base storm, as `converge` runs it). Needs only the
Python standard library and a built binary (default: target/release/
stormcharge, else `stormcharge` on the PATH). Prints a Markdown table and,
under it, each configuration's missed targets; exits 1 if any is missed.

The targets (docs/numerics.md):
- observed order of the charge-density and field profiles (over the
  records) at least 1 in time and 0.9 in space;
- error of the configured step at most 5 %, of the configured spacing at
  most 10 %, for the peak field and the region charges at the largest
  separation;
- flash counts (intracloud and ground) within one between the configured
  step and half of it;
- the same structure class at every level of both refinements;
- for the demo (configs/demo.toml), at the configured numerics: rain
  water at most 6 g m-3, peak surface rain rate at most 200 mm/h, warming
  of the 5-10 km layer at most 8 K (printed for every configuration,
  checked for the demo only, as the convergence issue asks).
"""
import argparse
import json
import math
import pathlib
import shutil
import subprocess
import sys
import tempfile

root = pathlib.Path(__file__).resolve().parent.parent

REGIONS = [
    "main negative region charge",
    "upper positive region charge",
    "lower positive region charge",
]
FLASHES = [
    "intracloud flashes",
    "negative ground flashes",
    "positive ground flashes",
]


def binary(given):
    if given:
        return given
    built = root / "target" / "release" / "stormcharge"
    if built.exists():
        return str(built)
    found = shutil.which("stormcharge")
    if found:
        return found
    sys.exit("no stormcharge binary: build it (cargo build --release) or give --binary")


def converge(exe, config, levels, overrides):
    with tempfile.TemporaryDirectory() as tmp:
        out = pathlib.Path(tmp) / "report.json"
        sets = [arg for o in overrides for arg in ("--set", o)]
        run = subprocess.run(
            [exe, "converge", str(config), "--levels", str(levels), "--json", str(out)] + sets,
            capture_output=True,
            text=True,
        )
        if run.returncode != 0:
            return None, run.stderr.strip()
        return json.loads(out.read_text()), ""


def series(report, refinement):
    return next(s for s in report["series"] if s["refinement"] == refinement)


def outcome(s, name):
    return next((o for o in s["outcomes"] if o["name"] == name), None)


def profile(s, name):
    return next((p for p in s["profiles"] if p["name"] == name), None)


def number(x):
    """JSON null stands for NaN or infinity; `exact` orders are infinite."""
    return float("nan") if x is None else float(x)


def order_of(s, name):
    p = profile(s, name)
    if p is None:
        return float("nan")
    if all(d < 1e-12 for d in p["differences"]):
        return math.inf  # identical to rounding at every level
    return number(p["order"])


def largest_error(s, names):
    errors = []
    for n in names:
        o = outcome(s, n)
        if o is None or all(v is None for v in o["values"]):
            continue  # the region does not exist at any level
        errors.append(number(o["error_of_configured"]))
    return max(errors) if errors else 0.0


def fmt(x, digits=2):
    if math.isinf(x):
        return "exact"
    if math.isnan(x):
        return "-"
    return f"{x:.{digits}f}"


def check(name, report):
    time, space = series(report, "time"), series(report, "space")
    missed = []
    orders = {}
    for label, s, bound in [("time", time, 1.0), ("space", space, 0.9)]:
        o = [order_of(s, "charge density"), order_of(s, "vertical field")]
        orders[label] = o
        for what, v in zip(["charge", "field"], o):
            if not (v >= bound):
                missed.append(f"order in {label} of the {what} {fmt(v)} < {bound}")
    errors = {}
    for label, s, bound in [("time", time, 0.05), ("space", space, 0.10)]:
        e = largest_error(s, ["peak |E_z|"] + REGIONS)
        errors[label] = e
        if not (e <= bound):
            missed.append(f"error in {label} {100 * e:.1f} % > {100 * bound:.0f} %")
    counts = []
    for level in (0, 1):
        counts.append(
            sum(number(outcome(time, f)["values"][level]) for f in FLASHES)
        )
    flashes_ok = abs(counts[0] - counts[1]) <= 1
    if not flashes_ok:
        missed.append(f"flashes {counts[0]:.0f} at dt, {counts[1]:.0f} at dt/2")
    classes_same = all(
        len(set(c["values"])) == 1 for s in (time, space) for c in s["classes"]
    )
    if not classes_same:
        missed.append("structure class changes between levels")
    rain = number(outcome(time, "largest rain water content")["values"][0])
    rate = number(outcome(time, "peak surface rain rate")["values"][0])
    warm = number(outcome(time, "largest warming of the 5-10 km layer")["values"][0])
    bounds = [
        ("rain water", rain, 6.0),
        ("peak rain rate", rate, 200.0),
        ("warming of 5-10 km", warm, 8.0),
    ]
    for what, v, bound in bounds if name == "demo" else []:
        if v > bound:
            missed.append(f"{what} {v:.1f} > {bound:g}")
    row = (
        f"| {name} | {fmt(orders['time'][0])}, {fmt(orders['time'][1])} "
        f"| {fmt(orders['space'][0])}, {fmt(orders['space'][1])} "
        f"| {100 * errors['time']:.1f} % | {100 * errors['space']:.1f} % "
        f"| {counts[0]:.0f} / {counts[1]:.0f} | {'yes' if classes_same else 'no'} "
        f"| {rain:.2f} | {rate:.0f} | {warm:.1f} | {'all met' if not missed else len(missed)} |"
    )
    return row, missed


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("configs", nargs="*")
    ap.add_argument("--binary")
    ap.add_argument("--levels", type=int, default=3)
    ap.add_argument("--set", action="append", default=[], metavar="KEY=VALUE")
    args = ap.parse_args()
    exe = binary(args.binary)
    configs = [pathlib.Path(c) for c in args.configs] or sorted((root / "configs").glob("*.toml"))
    print(
        "| configuration | order in time (charge, field) | order in space | "
        "largest error, time | largest error, space | flashes dt / dt/2 | "
        "classes the same | rain water (g m-3) | peak rain rate (mm/h) | "
        "warming 5-10 km (K) | targets missed |"
    )
    print("|" + "---|" * 11)
    notes = []
    for c in configs:
        report, err = converge(exe, c, args.levels, args.set)
        if report is None:
            print(f"| {c.stem} | converge failed: {err.splitlines()[-1] if err else '?'} |")
            notes.append((c.stem, ["converge failed"]))
            continue
        row, missed = check(c.stem, report)
        print(row)
        if missed:
            notes.append((c.stem, missed))
    for name, missed in notes:
        print(f"\n{name}: " + "; ".join(missed))
    sys.exit(1 if notes else 0)


if __name__ == "__main__":
    main()
