#!/usr/bin/env python3
"""Quick-look pictures of a stormcharge output with xarray and matplotlib.

Usage: plot_column.py OUT.nc [--time SECONDS] [-o PREFIX]

The same three panels as `stormcharge plot`: total charge density against
time and height (diverging colours centred on zero, symmetric limits) with
the 0, -10, -20 and -40 degC isotherms and flash initiation points by kind;
the field profile with the criteria thresholds at one time; the hydrometeor
mixing ratios at that time. Needs xarray, netCDF4 and matplotlib.
stormcharge is a research and teaching model, not a lightning-safety or
forecasting tool.
"""
import argparse

import matplotlib.pyplot as plt
import numpy as np
import xarray as xr

CRITERIA = ["conventional_breakdown", "hydrometeor_breakdown", "positive_streamer",
            "negative_streamer", "runaway_avalanche", "runaway_breakeven"]
KINDS = {1: ("intracloud", "tab:green"), 2: ("negative ground", "tab:purple"),
         3: ("positive ground", "tab:orange")}


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("path")
    ap.add_argument("--time", type=float, default=None, help="time of the profile panels (s)")
    ap.add_argument("-o", "--prefix", default=None)
    a = ap.parse_args()
    ds = xr.open_dataset(a.path, decode_times=False)
    t = ds["time"].values
    zkm = ds["z"].values / 1e3
    rho = ds["charge_density"].values * 1e9
    lim = max(np.abs(rho).max(), 1e-6)
    if a.time is None:
        rec = int(np.abs(ds["electric_field"].values).max(axis=1).argmax())
    else:
        rec = int(np.abs(t - a.time).argmin())

    fig = plt.figure(figsize=(14, 10))
    ax = fig.add_subplot(2, 1, 1)
    mesh = ax.pcolormesh(t, zkm, rho.T, cmap="RdBu_r", vmin=-lim, vmax=lim, shading="nearest")
    fig.colorbar(mesh, ax=ax, label="total charge density (nC m-3)")
    tc = ds["air_temperature"].values.T - 273.15
    cs = ax.contour(t, zkm, tc, levels=[-40, -20, -10, 0], colors="k", linewidths=1)
    ax.clabel(cs, fmt="%d degC")
    if "flash_kind" in ds:
        for kind, (name, colour) in KINDS.items():
            sel = ds["flash_kind"].values == kind
            ax.scatter(ds["flash_time"].values[sel], ds["flash_z_init"].values[sel] / 1e3,
                       color=colour, s=20, label=f"{name} flash")
        ax.legend(loc="upper left")
    ax.set_xlabel("time (s)")
    ax.set_ylabel("height (km)")
    ax.set_title(ds.attrs.get("title", a.path))

    ax = fig.add_subplot(2, 2, 3)
    zf = ds["z_face"].values / 1e3
    ax.plot(ds["electric_field"].values[rec] / 1e3, zf, "k", lw=2, label="E_z")
    for c in CRITERIA:
        thr = ds[f"threshold_{c}"].values / 1e3
        line, = ax.plot(thr, zf, lw=1, label=c.replace("_", " "))
        ax.plot(-thr, zf, lw=1, color=line.get_color())
    emax = max(1.2 * np.abs(ds["electric_field"].values[rec]).max() / 1e3,
               1.5 * ds["threshold_runaway_avalanche"].values.max() / 1e3)
    ax.set_xlim(-emax, emax)
    ax.set_xlabel("E_z (kV/m, positive up)")
    ax.set_ylabel("height (km)")
    ax.set_title(f"field and thresholds at t = {t[rec]:.0f} s")
    ax.legend(fontsize=8)

    ax = fig.add_subplot(2, 2, 4)
    for s in ["cloud", "rain", "ice", "snow", "graupel"]:
        ax.plot(ds[f"q_{s}"].values[rec] * 1e3, zkm, label=s)
    ax.set_xlabel("mixing ratio (g/kg)")
    ax.set_ylabel("height (km)")
    ax.set_title(f"hydrometeors at t = {t[rec]:.0f} s")
    ax.legend()

    fig.tight_layout()
    prefix = a.prefix or a.path.rsplit(".", 1)[0] + "_py"
    fig.savefig(prefix + ".png", dpi=100)
    fig.savefig(prefix + ".svg")
    print(f"wrote {prefix}.png and {prefix}.svg")


if __name__ == "__main__":
    main()
