#!/usr/bin/env python3
"""A vectorised NumPy column with the processes of stormcharge's demo, for
speed comparison only (docs/performance.md, "Against a NumPy column").

It is not a second implementation to check answers against: it takes the
same published forms as the Rust model (docs/microphysics.md,
docs/charging.md, docs/ions.md, docs/transport.md) and runs the demo's
processes, but integrates some of them more cheaply, so the comparison
flatters NumPy where it differs:

- the process rates of Lin, Farley & Orville (1983) with the fall laws,
  intercepts and efficiencies of docs/microphysics.md (warm rain,
  deposition, riming with the wet-growth limit of Musil 1970, rime
  splintering after Hallett & Mossop 1974, collection of ice and snow and of
  supercooled rain by graupel, Bigg freezing of rain and of the 20 um
  cloud droplets, drops freezing on the crystals they collect within the
  heat they can give off, melting),
  integrated with one
  fixed step of the three-stage Bogacki & Shampine (1989) method (the Rust
  model adapts the step under error control);
- saturation adjustment (Newton, three iterations) and cloud water held at
  liquid saturation inside the integration, Meyers et al. (1992)
  nucleation, homogeneous freezing below -40 degC (limited by its latent heat);
- limited (monotonised-central) flux-form advection by the demo's updraft
  (a table profile strongest at 8 km) with entrainment of environmental air
  (epsilon = 0.2/R), sub-stepped to Courant number 1; eddy diffusion
  (K = 100 m2 s-1, backward Euler, the inverse of its tridiagonal matrix
  formed once and applied to every field as one matrix product); sedimentation by mass-weighted speeds with the same
  limited second-order fluxes, sub-stepped to Courant number 0.5;
- non-inductive graupel-ice and snow-ice charging of Saunders & Peck
  (1998) with the size and speed factors of Saunders et al. (1991), in two
  half steps around the microphysics; charge follows mass through
  transport, sedimentation and the conversions between species
  (evaporation and sublimation release it to the ions);
- small ions: cosmic-ray production (an exponential stand-in for the
  model's Slyunyaev et al. 2015 profile), recombination (Tinsley & Zhou
  2006), attachment to every hydrometeor with the Coulomb factor x/(e^x - 1)
  of their mean charge (the attached charge goes to the particles), drift
  in the field, in two half steps around the step;
- the corona limit on the charge of precipitation (surface charge density
  against the onset field) and the Rayleigh limit of drops;
- the finite-column field: a dense response matrix times the charge
  (the Rust model uses Toeplitz-plus-Hankel sums or an FFT);
- the runaway-threshold ratio of the initiation criteria (no flashes, no
  output file, no budgets).

Usage:
    python3 tools/numpy_column.py [--levels 200] [--duration 3600] [--step 2]

It prints the step time and cell-steps per second (step loop only) and the
column's largest graupel, rain and field, so one can see it made a storm.
stormcharge is a research and teaching model, not a lightning-safety or
forecasting tool.
"""

import argparse
import math
import time

import numpy as np

# Constants (SI), as in model/physics/constants.rs.
G = 9.80665
R_D = 287.04
R_V = 461.5
CP = 1005.0
EPS = R_D / R_V
LV = 2.501e6
LS = 2.834e6
LF = LS - LV
T0 = 273.15
RHO_W = 1000.0
RHO_I = 916.7
V_DROPLET = math.pi / 6 * (20e-6) ** 3  # volume (m3) of the 20 um cloud droplet
K_AIR = 2.43e-2
PSI = 2.26e-5
NU = 1.5e-5
EPS0 = 8.8541878128e-12
E_CH = 1.602176634e-19
RHO0 = 1.225


def gamma(x):
    return math.gamma(x)


def es_liquid(t):
    """Murphy & Koop (2005) Eq. 10 (Pa)."""
    lt = np.log(t)
    return np.exp(54.842763 - 6763.22 / t - 4.210 * lt + 0.000367 * t
                  + np.tanh(0.0415 * (t - 218.8))
                  * (53.878 - 1331.22 / t - 9.44523 * lt + 0.014025 * t))


def es_ice(t):
    """Murphy & Koop (2005) Eq. 7 (Pa)."""
    return np.exp(9.550426 - 5723.265 / t + 3.53068 * np.log(t) - 0.00728332 * t)


class Species:
    """Exponential size distribution with a power-law fall speed (LFO83)."""

    def __init__(self, n0, rho_p, a, b, x):
        self.n0, self.rho_p, self.a, self.b, self.x = n0, rho_p, a, b, x
        self.mass_slope = math.pi * rho_p * n0
        self.sweep_c = math.pi * a * n0 * gamma(3.0 + b) / 4.0
        self.vm_c = a * gamma(4.0 + b) / 6.0
        self.vent_c = 0.31 * (NU / 2.26e-5) ** (1.0 / 3.0) * gamma(0.5 * (b + 5.0)) * math.sqrt(a)
        self.mass_sweep_c = math.pi ** 2 / 24.0 * n0 * rho_p * a * gamma(6.0 + b)

    def slope(self, rho, q):
        return np.where(q > 1e-12, (self.mass_slope / (rho * np.maximum(q, 1e-12))) ** 0.25, 0.0)

    def sweep(self, lam, corr):
        """Rate coefficient of continuous collection (s-1), LFO83 Eq. 24 form."""
        return np.where(lam > 0.0, self.sweep_c * corr / np.where(lam > 0, lam, 1.0) ** (3.0 + self.b), 0.0)

    def mass_sweep(self, lam, corr):
        """Mass of this species swept per collector per unit time (kg s-1),
        LFO83 Eq. 26 form (P_iacr per crystal)."""
        return np.where(lam > 0.0, self.mass_sweep_c * corr / np.where(lam > 0, lam, 1.0) ** (6.0 + self.b), 0.0)

    def vm(self, lam, corr):
        return np.where(lam > 0.0, self.vm_c * corr / np.where(lam > 0, lam, 1.0) ** self.b, 0.0)

    def vent(self, lam, air):
        lam1 = np.where(lam > 0, lam, 1.0)
        v = self.n0 * (0.78 / lam1 ** 2 + self.vent_c * air / lam1 ** (0.5 * (self.b + 5.0)))
        return np.where(lam > 0.0, v, 0.0)


def sp98_dq(rar, t_c, d_ice, v):
    """Saunders & Peck (1998) charge per collision (C), with the Saunders et
    al. (1991) size and speed factors (docs/charging.md)."""
    t = np.clip(t_c, -23.7, 0.0)
    rar_c = (1 + 7.9262e-2 * t + 4.4847e-2 * t ** 2 + 7.4754e-3 * t ** 3
             + 5.4686e-4 * t ** 4 + 1.6737e-5 * t ** 5 + 1.7613e-7 * t ** 6)
    qp = 6.74 * (rar - rar_c)
    x = (rar - 0.5 * (rar_c + 0.1)) / (rar_c - 0.1)
    qm = np.where(rar > 0.1, 3.9 * (rar_c - 0.1) * (4.0 * x * x - 1.0), 0.0)
    q = np.where(rar > rar_c, qp, qm) * 1e-15
    d = np.clip(d_ice, 1e-5, 1e-3)
    v = np.clip(v, 1.0, 10.0)
    bp = np.where(d < 155e-6, 4.92e13 * d ** 3.76, np.where(d < 452e-6, 4.04e6 * d ** 1.9, 52.8 * d ** 0.44)) * v ** 2.5
    bm = np.where(d < 253e-6, 5.24e8 * d ** 2.54, 24.0 * d ** 0.5) * v ** 2.8
    dq = np.where(q > 0, bp, bm) * q
    return np.where(t_c < 0.0, np.clip(dq, -1e-13, 1e-13), 0.0)


def limited_flux(q, c):
    """Flux-form upwind for positive Courant numbers c (<= 1) on faces
    1..n-1, monotonised-central limiter; returns the face values q_face."""
    dq = np.diff(q)
    up = np.concatenate(([0.0], dq[:-1]))
    r = np.where(np.abs(dq) > 1e-300, up / np.where(np.abs(dq) > 1e-300, dq, 1.0), 0.0)
    phi = np.maximum(0.0, np.minimum(np.minimum(2 * r, 0.5 * (1 + r)), 2.0))
    return q[:-1] + 0.5 * phi * (1.0 - c) * dq


def fall_fluxes(f, c):
    """Downward fluxes through the bottom face of every cell for centre
    fluxes f (falling, positive down) and Courant numbers c: the upwind
    value plus the limited Lax-Wendroff correction, as the Rust model."""
    down = np.concatenate(([0.0], f[:-1]))       # cell below
    far = np.concatenate((f[1:], [0.0]))         # cell above
    delta = down - f
    safe = np.where(delta != 0.0, delta, 1.0)
    r = (f - far) / safe
    phi = np.clip(np.minimum(2 * r, 0.5 * (1 + r)), 0.0, 2.0)
    flux = np.where(delta != 0.0, f + 0.5 * (1.0 - c) * phi * delta, f)
    flux[0] = f[0]
    return flux


def coulomb(x):
    """x/(e^x - 1) for the repelled sign and that plus |x| for the attracted."""
    ax = np.abs(x)
    small = ax < 1e-8
    rep = np.where(small, 1.0 - 0.5 * ax, ax / np.expm1(np.where(small, 1.0, np.minimum(ax, 700.0))))
    return rep, rep + ax


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--levels", type=int, default=200)
    ap.add_argument("--top", type=float, default=20000.0)
    ap.add_argument("--duration", type=float, default=3600.0)
    ap.add_argument("--step", type=float, default=2.0)
    a = ap.parse_args()

    n, dt = a.levels, a.step
    dz = a.top / n
    z = (np.arange(n) + 0.5) * dz
    # The demo's sounding (configs/demo.toml): height, T, dew point.
    snd = np.array([
        [0, 30.0, 26.5], [500, 26.5, 22.2], [1000, 23.0, 18.0], [1500, 19.5, 13.8],
        [2000, 16.4, 9.9], [3000, 10.1, 2.1], [4000, 3.8, -5.8], [5000, -2.6, -14.1],
        [6000, -8.8, -22.3], [7000, -15.1, -30.6], [8000, -21.4, -38.9], [9000, -27.8, -47.2],
        [10000, -34.0, -55.5], [11000, -40.4, -62.9], [12000, -46.6, -70.1], [12500, -49.8, -73.8],
        [13000, -49.0, -73.5], [14000, -47.5, -73.0], [16000, -44.5, -72.0], [18000, -41.5, -71.0],
        [20000, -38.5, -70.0]])
    t_env = np.interp(z, snd[:, 0], snd[:, 1]) + T0
    td = np.interp(z, snd[:, 0], snd[:, 2]) + T0
    # Hydrostatic pressure from 970 hPa.
    p = np.empty(n)
    p_s = 97000.0
    p[0] = p_s * math.exp(-G * z[0] / (R_D * t_env[0]))
    for k in range(1, n):
        tm = 0.5 * (t_env[k] + t_env[k - 1])
        p[k] = p[k - 1] * math.exp(-G * dz / (R_D * tm))
    rho = p / (R_D * t_env)
    exner = (p / 1e5) ** (R_D / CP)
    ew = es_liquid(td)
    qv_env = EPS * ew / (p - ew)
    th_env = t_env / exner
    corr = {"r": (RHO0 / rho) ** 0.4, "s": (RHO0 / rho) ** 0.5, "g": (RHO0 / rho) ** 0.5}
    air = (RHO0 / rho) ** 0.25 / math.sqrt(NU)
    rain = Species(8e6, RHO_W, 842.0, 0.8, 0.4)
    snow = Species(3e6, 100.0, 4.836, 0.25, 0.5)
    graupel = Species(1.26e5, 400.0, 1.3 * 1000 ** 0.66, 0.66, 0.5)
    # Updraft: the demo's table profile (factor of 11 m/s at 0, 1, 3, 5,
    # 8, 10, 13 km), pulse 900/1200/900 s.
    up_z = [0.0, 1000.0, 3000.0, 5000.0, 8000.0, 10000.0, 13000.0]
    up_f = [0.0, 0.25, 0.5, 0.7, 1.0, 0.9, 0.0]
    shape = np.interp(z, up_z, up_f, right=0.0)
    zf = np.arange(1, n) * dz
    shape_f = np.interp(zf, up_z, up_f, right=0.0)
    rho_f = 0.5 * (rho[1:] + rho[:-1])
    eps_ent = 0.2 / 3000.0
    # Eddy diffusion, backward Euler in flux form with no flux at the ends:
    # (rho x)_new - dt/dz^2 [rho_f K (x_new_{k+1} - x_new_k) - ...] = (rho x)_old.
    k_eddy = 100.0
    a_mat = np.diag(rho.copy())
    cpl = dt * k_eddy * rho_f / dz ** 2
    for k in range(n - 1):
        a_mat[k, k] += cpl[k]; a_mat[k + 1, k + 1] += cpl[k]
        a_mat[k, k + 1] -= cpl[k]; a_mat[k + 1, k] -= cpl[k]
    diffuse_t = (np.linalg.inv(a_mat) * rho[None, :]).T  # x_new = x_old @ diffuse_t

    # Field response: potential-free finite column of radius R, field at
    # cell centres from uniform disks (E of a disk on its axis).
    radius = 3000.0
    dzm = z[:, None] - z[None, :]
    zi = z[None, :]
    def disk(h):
        return np.sign(h) * (1.0 - np.abs(h) / np.sqrt(h * h + radius ** 2))
    # Each cell's charge (C m-3) as a slab of thickness dz, and its image in
    # the conducting ground.
    resp = dz / (2 * EPS0) * (disk(dzm) - disk(z[:, None] + zi))
    np.fill_diagonal(resp, 0.0)
    e_run = 2.84e5 * rho / RHO0

    # State.
    th = th_env.copy()
    qv = qv_env.copy()
    qc = np.zeros(n); qr = np.zeros(n); qi = np.zeros(n); qs = np.zeros(n); qg = np.zeros(n)
    ni = np.zeros(n)
    chg = np.zeros((5, n))  # C kg-1 on cloud, rain, ice, snow, graupel
    q_ion = 1.4e6 * np.exp(z / 5000.0) + 5e6 * np.exp(-z / 1000.0)
    alpha = 1.67e-12
    n_pos = np.sqrt(q_ion / alpha)
    n_neg = n_pos.copy()
    mu_p = 1.4e-4 * (101325.0 / p) * (t_env / 288.15) ** 0.6
    mu_n = 1.9e-4 * (101325.0 / p) * (t_env / 288.15) ** 0.6
    e_field = np.zeros(n)
    peak_e = 0.0
    peak_ratio = 0.0

    def rates(qv, qc, qr, qi, qs, qg, t, ni):
        lr = rain.slope(rho, qr); ls = snow.slope(rho, qs); lg = graupel.slope(rho, qg)
        ew = es_liquid(t); ei = es_ice(t)
        qsw = EPS * ew / (p - ew); qsi = EPS * ei / (p - ei)
        cold = t < T0
        auto = 1e-3 * np.maximum(qc - 1e-3, 0.0)
        accr = rain.sweep(lr, corr["r"]) * qc
        sw = qv / qsw
        ab = LV * LV / (K_AIR * R_V * t * t) + 1.0 / (rho * qsw * PSI)
        evap = np.where(sw < 1.0, 2 * math.pi * (1 - sw) * rain.vent(lr, air) / rho / ab, 0.0)
        si = qv / qsi
        ab_i = LS * LS / (K_AIR * R_V * t * t) + 1.0 / (rho * qsi * PSI)
        di = np.where((qi > 0) & (ni > 0), np.cbrt(6 * qi / np.maximum(ni, 1e-30) / (math.pi * RHO_I)), 0.0)
        dep_i = np.where(cold | (si < 1), ni * 2 * math.pi * di * (si - 1) / ab_i, 0.0)
        dep_s = np.where(cold | (si < 1), 2 * math.pi * (si - 1) * snow.vent(ls, air) / rho / ab_i, 0.0)
        dep_g = np.where(cold | (si < 1), 2 * math.pi * (si - 1) * graupel.vent(lg, air) / rho / ab_i, 0.0)
        s_sw = snow.sweep(ls, corr["s"]); g_sw = graupel.sweep(lg, corr["g"])
        dtc = t - T0
        e_s = np.exp(0.025 * dtc); e_g = np.exp(0.09 * dtc)
        by_s = s_sw * qc; by_g = g_sw * qc
        i2s = np.where(cold, 1e-3 * e_s * np.maximum(qi - 1e-3, 0) + s_sw * e_s * qi, 0.0)
        i2g = np.where(cold, g_sw * e_g * qi, 0.0)
        vg = graupel.vm(lg, corr["g"]); vs = snow.vm(ls, corr["s"]); vr = rain.vm(lr, corr["r"])
        lsi = np.where(ls > 0, 1 / np.where(ls > 0, ls, 1), 0.0)
        lgi = np.where(lg > 0, 1 / np.where(lg > 0, lg, 1), 0.0)
        lri = np.where(lr > 0, 1 / np.where(lr > 0, lr, 1), 0.0)
        s2g_c = np.where(cold, math.pi ** 2 * e_g * graupel.n0 * snow.n0 * np.abs(vg - vs) * (100.0 / rho)
                         * lsi ** 4 * lgi * (5 * lsi ** 2 + 2 * lsi * lgi + 0.5 * lgi ** 2), 0.0)
        r2g_c = np.where(cold, math.pi ** 2 * graupel.n0 * rain.n0 * np.abs(vg - vr) * (RHO_W / rho)
                         * lri ** 4 * lgi * (5 * lri ** 2 + 2 * lri * lgi + 0.5 * lgi ** 2), 0.0)
        # Drops freezing on the crystals they collect (LFO83 P_raci, P_iacr),
        # no faster than the drops can give off the heat (Musil 1970).
        crystals = cold & (qi > 0) & (ni > 0) & (lr > 0)
        raci = np.where(crystals, rain.sweep(lr, corr["r"]) * qi, 0.0)
        cap_r = np.maximum((2 * math.pi * rain.vent(lr, air) * (K_AIR * (T0 - t) + LV * PSI * (4.85e-3 - rho * qv)) / rho
                            + 2106.0 * (T0 - t) * raci) / (LF - 4218.0 * (T0 - t)), 0.0)
        iacr = np.where(crystals, np.minimum(ni * rain.mass_sweep(lr, corr["r"]), cap_r), 0.0)
        liquid = by_g + r2g_c
        cap = np.maximum((2 * math.pi * graupel.vent(lg, air) * (K_AIR * (T0 - t) + LV * PSI * (4.85e-3 - rho * qv)) / rho
                          + 2106.0 * (T0 - t) * (i2g + s2g_c)) / (LF - 4218.0 * (T0 - t)), 0.0)
        f = np.where(cold & (liquid > cap), cap / np.where(liquid > 0, liquid, 1), 1.0)
        shed = np.where(cold, by_g * (1 - f), by_s + by_g)
        by_g = by_g * f
        r2g_c = r2g_c * f
        spl = np.where(cold & (t < T0 - 3) & (t > T0 - 8), 3.5e8 * (by_s + by_g) * 1e-12, 0.0)
        # Cloud droplets (20 um) freezing by Bigg's law, each a crystal.
        frz = np.where(cold & (qc > 0), qc * 100.0 * (np.exp(0.66 * (T0 - t)) - 1) * V_DROPLET, 0.0)
        c2s = np.where(cold, by_s, 0.0); c2g = np.where(cold, by_g, 0.0)
        s2g = np.where(cold & (by_s > 0), 1e-3 * e_g * np.maximum(qs - 6e-4, 0), 0.0)
        bigg = np.where(cold & (lr > 0), 20 * math.pi ** 2 * 100.0 * rain.n0 * (RHO_W / rho)
                        * (np.exp(0.66 * (T0 - t)) - 1) * lri ** 7, 0.0)
        melt_s = np.where(~cold, 2 * math.pi * K_AIR / LF * (t - T0) * snow.vent(ls, air) / rho, 0.0)
        melt_g = np.where(~cold, 2 * math.pi * K_AIR / LF * (t - T0) * graupel.vent(lg, air) / rho, 0.0)
        dv = -(dep_i + dep_s + dep_g) + evap
        dc = -(auto + accr + c2s + c2g + shed + spl + frz)
        dr = auto + accr + shed - evap - bigg - r2g_c - iacr + melt_s + melt_g
        dii = dep_i + spl + frz - i2s - i2g - raci
        ds = dep_s + i2s + c2s - s2g - s2g_c - melt_s
        dg = dep_g + c2g + s2g + s2g_c + bigg + r2g_c + iacr + raci + i2g - melt_g
        dni = (np.where(qi > 0, (-(i2s + i2g + raci)) * ni / np.maximum(qi, 1e-30), 0.0) + spl * 1e12
               + frz / (RHO_W * V_DROPLET))
        dtemp = (-LV * evap + LS * (dep_i + dep_s + dep_g)
                 + LF * (c2s + c2g + spl + frz + bigg + r2g_c + iacr - melt_s - melt_g)) / CP
        # Cloud water held at liquid saturation inside the integration (the
        # model's microphysics.cloud_equilibrium): the condensation rate that
        # keeps d(qv)/dt = s dT/dt while cloud water exists; evaporation no
        # faster than the cloud's other sinks (-dc so far) leave in 1 s.
        s_w = qsw * LV / (R_V * t * t)
        ceq = (dv - s_w * dtemp) / (1 + s_w * LV / CP)
        ceq = np.where(qc > 0, np.maximum(ceq, -np.maximum(qc + dc, 0.0)), 0.0)
        dv = dv - ceq
        dc = dc + ceq
        dtemp = dtemp + LV / CP * ceq
        transfers = (auto + accr + shed, c2s, c2g, spl + frz, i2s, i2g + raci, s2g + s2g_c, bigg + r2g_c + iacr, melt_s,
                     melt_g, evap, dep_i, dep_s, dep_g, ceq)
        return dv, dc, dr, dii, ds, dg, dni, dtemp, transfers

    n_env = n_pos.copy()
    mobility = (mu_p, mu_n)
    k_b = 1.380649e-23

    def populations(qc, qr, qi, qs, qg, ni, t):
        """Number (m-3) and mean radius (m) of each carrier, in chg order."""
        out = []
        nc = 1e8
        out.append((np.where(qc > 1e-12, nc, 0.0), np.cbrt(3 * rho * np.maximum(qc, 0) / (4 * math.pi * RHO_W * nc))))
        for q, sp in ((qr, rain),):
            lam = sp.slope(rho, q)
            lam1 = np.where(lam > 0, lam, 1.0)
            out.append((np.where(lam > 0, sp.n0 / lam1, 0.0), 0.5 / lam1))
        di = np.where((qi > 1e-12) & (ni > 0), np.cbrt(6 * qi / np.maximum(ni, 1e-30) / (math.pi * RHO_I)), 0.0)
        out.append((np.where(di > 0, rho * ni, 0.0), 0.5 * di))
        for q, sp in ((qs, snow), (qg, graupel)):
            lam = sp.slope(rho, q)
            lam1 = np.where(lam > 0, lam, 1.0)
            out.append((np.where(lam > 0, sp.n0 / lam1, 0.0), 0.5 / lam1))
        return out

    def ions(qc, qr, qi, qs, qg, ni, t, e_f_centres, h):
        """Production, recombination and attachment (Coulomb factor, the
        attached charge to the particles), backward Euler; then the drift."""
        pops = populations(qc, qr, qi, qs, qg, ni, t)
        loss = [np.zeros(n), np.zeros(n)]
        rates_ = []
        for j, (num, r) in enumerate(pops):
            rr = np.where(r > 0, r, 1.0)
            qmean = np.where(num > 0, rho * chg[j] / np.where(num > 0, num, 1.0), 0.0)
            x = qmean * E_CH / (4 * math.pi * EPS0 * rr * k_b * t)
            rep, att = coulomb(x)
            f_pos = np.where(x >= 0, rep, att)
            f_neg = np.where(x >= 0, att, rep)
            base = 4 * math.pi * num * np.where(r > 0, r, 0.0)
            kp = base * mobility[0] * k_b * t / E_CH * f_pos
            km = base * mobility[1] * k_b * t / E_CH * f_neg
            rates_.append((kp, km))
            loss[0] += kp
            loss[1] += km
        # Backward Euler with one recombination (as in the model's balance step).
        a_p = 1 + loss[0] * h
        b_m = 1 + loss[1] * h
        pp = n_pos + q_ion * h
        mm = n_neg + q_ion * h
        cc = alpha * h
        lin = a_p * b_m + cc * (mm - pp)
        x_new = 2 * pp * b_m / (lin + np.sqrt(lin * lin + 4 * cc * a_p * pp * b_m))
        lin2 = b_m * a_p + cc * (pp - mm)
        y_new = 2 * mm * a_p / (lin2 + np.sqrt(lin2 * lin2 + 4 * cc * b_m * mm * a_p))
        rec = cc * x_new * y_new
        att_p = (a_p - 1) * x_new
        att_m = (b_m - 1) * y_new
        for j, (kp, km) in enumerate(rates_):
            sp_ = np.where(loss[0] > 0, att_p * kp / np.where(loss[0] > 0, loss[0], 1.0), 0.0)
            sm_ = np.where(loss[1] > 0, att_m * km / np.where(loss[1] > 0, loss[1], 1.0), 0.0)
            chg[j] += E_CH * (sp_ - sm_) / rho
        n_pos[:] = np.maximum(pp - rec - att_p, 0.0)
        n_neg[:] = np.maximum(mm - rec - att_m, 0.0)
        # Drift in the field, with the field the flux itself removes,
        # sub-stepped to drift Courant number 0.5 as in the model (one
        # explicit step drove concentrations negative where the drift
        # crossed more than a cell).
        e_f = 0.5 * (e_f_centres[1:] + e_f_centres[:-1])
        fastest = float(np.max(np.maximum(mu_p[1:], mu_n[1:]) * np.abs(e_f)))
        nsub = max(1, int(math.ceil(fastest * h / (0.5 * dz))))
        hs = h / nsub
        for _ in range(nsub):
            fp = np.where(e_f > 0, n_pos[:-1], n_pos[1:]) * mu_p[1:] * e_f * hs / dz
            fn = np.where(e_f < 0, n_neg[:-1], n_neg[1:]) * mu_n[1:] * (-e_f) * hs / dz
            sig = E_CH * (np.where(e_f > 0, n_pos[:-1], n_pos[1:]) * mu_p[1:]
                          + np.where(e_f < 0, n_neg[:-1], n_neg[1:]) * mu_n[1:])
            xx = sig * hs / EPS0
            relax = np.where(xx > 1e-8, -np.expm1(-xx) / np.maximum(xx, 1e-8), 1.0)
            fp *= relax
            fn *= relax
            n_pos[:-1] -= fp; n_pos[1:] += fp
            n_neg[:-1] -= fn; n_neg[1:] += fn
            e_f = e_f - E_CH * (fp - fn) * dz / EPS0

    def charging(qv, qc, qr, qi, qs, qg, t, ni, h):
        """SP98 graupel-ice and snow-ice charging over h s."""
        vg = graupel.vm(graupel.slope(rho, qg), corr["g"])
        vs = snow.vm(snow.slope(rho, qs), corr["s"])
        di = np.where((qi > 0) & (ni > 0), np.cbrt(6 * qi / np.maximum(ni, 1e-30) / (math.pi * RHO_I)), 0.0)
        vi = 3.29 * (rho * qi) ** 0.16 * corr["s"]
        ew_eff = rho * qc * 1e3
        for sp, v, ci, cr in ((graupel, vg, 4, corr["g"]), (snow, vs, 3, corr["s"])):
            dq = sp98_dq(ew_eff * v, t - T0, di, np.abs(v - vi))
            lam = sp.slope(rho, qg if ci == 4 else qs)
            coll = np.where(lam > 0, sp.sweep(lam, cr) * ni, 0.0)  # kg-1 s-1
            d_chg = coll * dq * h
            chg[ci] += d_chg
            chg[2] -= d_chg

    steps = int(round(a.duration / dt))
    start = time.perf_counter()
    for it in range(steps):
        tnow = it * dt
        env = min(tnow / 900.0, 1.0) if tnow < 2100.0 else max(0.0, 1.0 - (tnow - 2100.0) / 900.0)
        w_f = 11.0 * env * shape_f
        mflux = rho_f * w_f
        # First half of the small ions, in the field of the last step.
        ions(qc, qr, qi, qs, qg, ni, th * exner, e_field, 0.5 * dt)
        # Transport of all per-mass fields with entrainment.
        ion_pos = n_pos / rho
        ion_neg = n_neg / rho
        fields = [th, qv, qc, qr, qi, qs, qg, ni, *chg, ion_pos, ion_neg]
        cmax = float(np.max(np.abs(w_f))) * dt / dz
        nsub = max(1, int(math.ceil(cmax)))
        h = dt / nsub
        c = w_f * h / dz
        for _ in range(nsub):
            for f in fields:
                # Advective form from flux differences: the mass-flux
                # divergence is lateral exchange, so a per-mass field changes
                # only by what the updraft brings in (docs/transport.md).
                fl = np.zeros(n + 1)
                ml = np.zeros(n + 1)
                fl[1:-1] = mflux * limited_flux(f, c)
                ml[1:-1] = mflux
                f -= h / (rho * dz) * (np.diff(fl) - f * np.diff(ml))
        ent = np.exp(-eps_ent * 11.0 * env * shape * dt)
        th[:] = th_env + (th - th_env) * ent
        qv[:] = qv_env + (qv - qv_env) * ent
        for f in (qc, qr, qi, qs, qg, ni, *chg):
            f *= ent
        ion_env = n_env / rho
        n_pos[:] = rho * (ion_env + (ion_pos - ion_env) * ent)
        n_neg[:] = rho * (ion_env + (ion_neg - ion_env) * ent)
        # Eddy diffusion of every field as its departure from the base state.
        # The small ions mix as concentrations per kg, as in the model
        # (docs/transport.md): mixed as departures from clear air they went
        # negative in stripped layers.
        mixed = np.vstack([th - th_env, qv - qv_env, qc, qr, qi, qs, qg, ni, chg,
                           n_pos / rho, n_neg / rho]) @ diffuse_t
        th[:] = th_env + mixed[0]; qv[:] = qv_env + mixed[1]
        for j, f in enumerate((qc, qr, qi, qs, qg, ni)):
            f[:] = mixed[2 + j]
        chg[:] = mixed[8:13]
        n_pos[:] = rho * mixed[13]; n_neg[:] = rho * mixed[14]
        # Charging, first half (SP98 graupel-ice and snow-ice).
        charging(qv, qc, qr, qi, qs, qg, th * exner, ni, 0.5 * dt)
        # Microphysics: one Bogacki-Shampine step of the rates.
        t = th * exner
        y = [qv, qc, qr, qi, qs, qg, ni, t]
        k1 = rates(*y[:6], y[7], y[6])
        def stage(k, f):
            # Mixing ratios and numbers stay non-negative; temperature free.
            return [np.maximum(y[j] + f * dt * k[j], 0.0) for j in range(7)] + [y[7] + f * dt * k[7]]

        y2 = stage(k1, 0.5)
        k2 = rates(*y2[:6], y2[7], y2[6])
        y3 = stage(k2, 0.75)
        k3 = rates(*y3[:6], y3[7], y3[6])
        new = [y[j] + dt * (2 * k1[j] + 3 * k2[j] + 4 * k3[j]) / 9.0 for j in range(8)]
        # Charge follows mass: each transfer moves its share of the source's
        # charge (shares over the mass that passed through the source).
        tr = [dt * (2 * a + 3 * b + 4 * c) / 9.0 for a, b, c in zip(k1[8], k2[8], k3[8])]
        (c2r, c2s_, c2g_, c2i, i2s_, i2g_, s2g_, r2g_, s2r, g2r, r2v, v2i, v2s, v2g, v2c) = tr
        through = [qc + np.maximum(v2c, 0) + 1e-30, qr + c2r + s2r + g2r + 1e-30, qi + c2i + np.maximum(v2i, 0) + 1e-30,
                   qs + c2s_ + i2s_ + np.maximum(v2s, 0) + 1e-30,
                   qg + c2g_ + i2g_ + s2g_ + r2g_ + np.maximum(v2g, 0) + 1e-30]
        c0 = [chg[j].copy() for j in range(5)]
        def move(src, dst, m):
            amount = c0[src] * np.minimum(np.maximum(m, 0.0) / through[src], 1.0)
            chg[src] -= amount
            if dst is not None:
                chg[dst] += amount
            else:
                released[:] += amount
        released = np.zeros(n)
        for src, dst, m in ((0, 1, c2r), (0, 3, c2s_), (0, 4, c2g_), (0, 2, c2i), (2, 3, i2s_), (2, 4, i2g_),
                            (3, 4, s2g_), (1, 4, r2g_), (3, 1, s2r), (4, 1, g2r), (1, None, r2v),
                            (2, None, -v2i), (3, None, -v2s), (4, None, -v2g), (0, None, -v2c)):
            move(src, dst, m)
        qv, qc, qr, qi, qs, qg, ni = [np.maximum(v, 0.0) for v in new[:7]]
        t = new[7]
        # Saturation adjustment (Newton on liquid saturation).
        for _ in range(3):
            ew = es_liquid(t)
            qsw = EPS * ew / (p - ew)
            dqs = qsw * LV / (R_V * t * t)
            d = (qv - qsw) / (1 + LV / CP * dqs)
            d = np.maximum(d, -qc)
            qv = qv - d; qc = qc + d; t = t + LV / CP * d
        # Nucleation (Meyers et al. 1992) and homogeneous freezing.
        ei = es_ice(t)
        si = qv / (EPS * ei / (p - ei))
        nuc = np.where((t < T0) & (si > 1), 10.0 * 1e3 * np.exp(-0.639 + 12.96 * np.minimum(si - 1, 0.5)) / rho, 0.0)
        add = np.maximum(np.minimum(nuc, 1e5) - ni, 0.0)
        dm = np.minimum(add * 1e-12, qv)
        ni = ni + add; qi = qi + dm; qv = qv - dm; t = t + LS / CP * dm
        # Homogeneous freezing, limited by the supercooling below -40 degC
        # (its latent heat keeps the cell at or below -40 degC).
        frz = np.where(t < T0 - 40.0, np.minimum(qc, CP * (T0 - 40.0 - t) / LF), 0.0)
        share = np.where(frz > 0, frz / np.maximum(qc, 1e-30), 0.0)
        t = t + LF / CP * frz
        qi = qi + frz
        ni = ni + frz / 4.19e-12
        moved = chg[0] * np.minimum(share, 1.0)
        chg[2] += moved
        chg[0] = chg[0] - moved
        qc = qc - frz
        # Vanished species give their charge to the ions.
        for j, q in enumerate((qc, qr, qi, qs, qg)):
            gone = q <= 1e-18
            released += np.where(gone, chg[j], 0.0)
            chg[j] = np.where(gone, 0.0, chg[j])
        th = t / exner
        # Charging, second half.
        charging(qv, qc, qr, qi, qs, qg, t, ni, 0.5 * dt)
        # Charge released to the air becomes ions (per kg -> per m3).
        rel = rho * released / E_CH
        n_pos += np.maximum(rel, 0.0)
        n_neg += np.maximum(-rel, 0.0)
        # Sedimentation, limited second-order fluxes, charge following mass.
        for q, sp, cr, ci in ((qr, rain, corr["r"], 1), (qs, snow, corr["s"], 3), (qg, graupel, corr["g"], 4)):
            v = sp.vm(sp.slope(rho, q), cr)
            nsed = max(1, int(math.ceil(float(np.max(v)) * dt / dz / 0.5)))
            hs = dt / nsed
            for _ in range(nsed):
                v = sp.vm(sp.slope(rho, q), cr)
                c = v * hs / dz
                fl = fall_fluxes(rho * q * v, c) * hs / dz
                fc = fall_fluxes(rho * chg[ci] * v, c) * hs / dz
                q[:] -= fl / rho
                q[:-1] += fl[1:] / rho[:-1]
                chg[ci] -= fc / rho
                chg[ci, :-1] += fc[1:] / rho[:-1]
        # Field, then the second half of the small ions.
        rho_q = rho * chg.sum(axis=0) + E_CH * (n_pos - n_neg)
        e_field = resp @ rho_q
        ions(qc, qr, qi, qs, qg, ni, t, e_field, 0.5 * dt)
        rho_q = rho * chg.sum(axis=0) + E_CH * (n_pos - n_neg)
        e_field = resp @ rho_q
        # Charge limits of the precipitation: corona (surface charge density
        # against the onset) and the Rayleigh limit of drops.
        e_amb = np.abs(e_field)
        onset_drop = np.maximum(5.5e5 + (9.0e5 - 5.5e5) / 5e4 * (p - 5e4), 5.5e4)
        for q, sp, ci, onset in ((qr, rain, 1, onset_drop),
                                 (qs, snow, 3, np.where(t > T0 - 18.0, 4.0e5 * onset_drop / 5.5e5, np.inf)),
                                 (qg, graupel, 4, np.where(t > T0 - 18.0, 4.0e5 * onset_drop / 5.5e5, np.inf))):
            lam = sp.slope(rho, q)
            ok = (lam > 0) & (sp.n0 / np.where(lam > 0, lam, 1.0) > 1.0)
            dens = rho * chg[ci]
            sigma = np.abs(dens) * lam ** 3 / (2 * math.pi * sp.n0)
            allowed = np.where(np.isfinite(onset), EPS0 * 3.0 * np.maximum(onset - e_amb, 0.0), np.inf)
            share = np.where(sigma > 0, allowed / np.where(sigma > 0, sigma, 1.0), np.inf)
            if ci == 1:
                lam1 = np.where(ok, lam, 1.0)
                d = np.log(np.maximum(sp.n0 / lam1, 1.0)) / lam1
                q_tail = np.abs(dens) * d * d * lam1 ** 3 / (2 * sp.n0)
                ray = 8 * math.pi * np.sqrt(EPS0 * 0.0728 * (0.5 * d) ** 3)
                share = np.minimum(share, np.where(q_tail > 0, ray / np.where(q_tail > 0, q_tail, 1.0), np.inf))
            cut = ok & (share < 1.0)
            removed = np.where(cut, chg[ci] * (1.0 - np.minimum(share, 1.0)), 0.0)
            chg[ci] -= removed
            rel = rho * removed / E_CH
            n_pos += np.maximum(rel, 0.0)
            n_neg += np.maximum(-rel, 0.0)
        # Initiation criterion: |E| over the runaway threshold.
        ratio = np.abs(e_field) / e_run
        peak_ratio = max(peak_ratio, float(ratio.max()))
        peak_e = max(peak_e, float(np.abs(e_field).max()))
    elapsed = time.perf_counter() - start
    print(f"levels {n}, steps {steps}: step loop {elapsed:.3f} s, "
          f"{n * steps / elapsed:.3e} cell-steps per second")
    print(f"largest graupel {1e3 * qg.max():.2f} g/kg, rain {1e3 * qr.max():.2f} g/kg (at the end), "
          f"peak |E| {peak_e / 1e3:.1f} kV/m, peak ratio to runaway {peak_ratio:.2f}")


if __name__ == "__main__":
    main()
