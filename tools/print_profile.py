#!/usr/bin/env python3
"""Print the base-state profile of one record of a stormcharge NetCDF file.

Usage: print_profile.py OUT.nc [RECORD] [--every N]

Needs the netCDF4 package (pip install netCDF4). stormcharge is a research
and teaching model, not a lightning-safety or forecasting tool.
"""
import argparse

from netCDF4 import Dataset


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("path")
    ap.add_argument("record", nargs="?", type=int, default=-1)
    ap.add_argument("--every", type=int, default=10, help="print every Nth level")
    a = ap.parse_args()
    with Dataset(a.path) as ds:
        if getattr(ds, "run_status", "") != "complete":
            print("note: file is marked", getattr(ds, "run_status", "unknown"))
        z = ds["z"][:]
        t = ds["time"][a.record]
        print(f"{ds.title}: record {a.record}, t = {t} {ds['time'].units}")
        print(f"{'z (m)':>9} {'p (hPa)':>9} {'T (degC)':>9} {'rho (kg m-3)':>13} {'r_v (g/kg)':>11}")
        p = ds["air_pressure"][a.record, :]
        tk = ds["air_temperature"][a.record, :]
        rho = ds["air_density"][a.record, :]
        rv = ds["q_vapour"][a.record, :]
        for k in range(0, len(z), a.every):
            print(f"{z[k]:9.0f} {p[k] / 100:9.2f} {tk[k] - 273.15:9.2f} {rho[k]:13.5f} {rv[k] * 1e3:11.3f}")


if __name__ == "__main__":
    main()
