#!/usr/bin/python3
"""An analyst's script: the bulk warm-rain diagnostics of warmrain with xarray/numpy/scipy.

Benchmark reference (e) of bench/run.sh. It is written the way an analyst would write it:
open the file with xarray (CF decoding: fill -> NaN, scale_factor/add_offset), load the
whole fields, compute every diagnostic vectorised with numpy in float64, and write the
same variables as `warmrain process --no-collector` with the same compression (zlib
level 1, shuffle, the same chunks). It is not part of warmrain.

Formulas and defaults follow microphys/ (adiabatic.go, autoconv.go, drizzle.go, pop.go,
column.go, params.go):
  c_w along the moist adiabat at cloud-top T and p, Bolton (1980) e_s and L_v
  tau = LWP / ((5/9) rho_w r_e)                        [Brenguier et al. 2000]
  N_d = sqrt(5)/(2 pi k) sqrt(f_ad c_w tau / (Q_ext rho_w r_e^5))
  H = sqrt(2 LWP / (f_ad c_w))
  P = 1350/3.47 rho^(1-2.47) (N_d/cm-3)^-1.79 Gamma^2.47 H^3.47   [KK2000, closed form]
  R_cb = 0.37 (LWP/g m-2)^1.75 (N_d/cm-3)^-1.75 mm day-1   [Comstock et al. 2004]
  LWP* = (8/9) (pi rho_w k N_d r*^3)^2 / Gamma;  POP = Q(nu, nu LWP*/LWP), nu = (LWP/sd)^2
Screening (roughly as Model.Column): LWP or r_e missing; LWP < 5 g m-2 or tau < 3;
r_e outside 4-30 um; CTT < 273.15 K; N_d outside 10-1000 cm-3; H > 1500 m.

Usage: /usr/bin/python3 bench/bulk_xarray.py IN.nc OUT.nc [--chunks CY,CX]
Prints its read/compute/write times (s) to stderr as one line:
  bulk_xarray: read R compute C write W total T columns N
"""

import sys
import time

import numpy as np
import scipy.special
import xarray as xr

# Parameters (microphys.DefaultParams).
K, QEXT, FAD, RESTAR, NU_DEFAULT = 0.8, 2.0, 1.0, 14e-6, 4.0
ONSET_WIDTH = 4e-6  # the onset probability rises linearly over RESTAR -+ ONSET_WIDTH/2
MIN_LWP, MIN_TAU, RE_MIN, RE_MAX, MIN_CTT = 5e-3, 3.0, 4e-6, 30e-6, 273.15
ND_MIN, ND_MAX, H_MAX = 10e6, 1000e6, 1500.0
DEF_CTT, DEF_CTP = 285.0, 90000.0
DRZ_A, DRZ_B, DRZ_C = 0.37, 1.75, 1.75
# Constants (microphys/constants.go).
G, RD, RV, CPD, RHOW, T0 = 9.80665, 287.04, 461.5, 1005.7, 1000.0, 273.15
EPS = RD / RV
KK_A, KK_B, KK_C = 1350.0, 2.47, 1.79
# QC bits (microphys/qc.go).
QC_MISSING, QC_THIN, QC_RE, QC_ICE, QC_ND, QC_H = 1, 4, 8, 16, 32, 64
QC_GAMMA_ASSUMED, QC_RH_ASSUMED, QC_BASE_ASSUMED = 1 << 9, 1 << 10, 1 << 11


def find(ds, standard_name, sd=False):
    """The data variable with this standard_name (and an SD cell_method or not)."""
    for name, v in ds.data_vars.items():
        if v.attrs.get("standard_name") != standard_name:
            continue
        is_sd = "standard_deviation" in v.attrs.get("cell_methods", "")
        if is_sd == sd:
            return v
    return None


UNIT = {"g m-2": 1e-3, "kg m-2": 1.0, "um": 1e-6, "m": 1.0, "K": 1.0, "hPa": 100.0, "Pa": 1.0}


def si(v):
    return v.values.astype(np.float64) * UNIT[v.attrs["units"]]


def main(argv):
    if len(argv) < 2:
        sys.exit(__doc__)
    src, dst = argv[0], argv[1]
    chunks = None
    if len(argv) >= 4 and argv[2] == "--chunks":
        chunks = tuple(int(c) for c in argv[3].split(","))

    t0 = time.perf_counter()
    ds = xr.open_dataset(src)
    lwp_v = find(ds, "atmosphere_mass_content_of_cloud_liquid_water")
    lwp = si(lwp_v)
    re = si(find(ds, "effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top"))
    sd_v = find(ds, "atmosphere_mass_content_of_cloud_liquid_water", sd=True)
    sd = si(sd_v) if sd_v is not None else np.full_like(lwp, np.nan)
    ctt_v, ctp_v = find(ds, "air_temperature_at_cloud_top"), find(ds, "air_pressure_at_cloud_top")
    T = si(ctt_v) if ctt_v is not None else np.full_like(lwp, DEF_CTT)
    p = si(ctp_v) if ctp_v is not None else np.full_like(lwp, DEF_CTP)
    T = np.where(np.isnan(T), DEF_CTT, T)
    p = np.where(np.isnan(p), DEF_CTP, p)
    t1 = time.perf_counter()

    with np.errstate(invalid="ignore", divide="ignore"):
        # Moist adiabat at cloud top: Bolton (1980) e_s and L_v.
        tc = T - T0
        es = 611.2 * np.exp(17.67 * tc / (tc + 243.5))
        lv = (2.501 - 0.00237 * tc) * 1e6
        rs = EPS * es / (p - es)
        gm = G * (1 + lv * rs / (RD * T)) / (CPD + lv * lv * rs * EPS / (RD * T * T))
        tv = T * (1 + rs / EPS) / (1 + rs)
        rho = p / (RD * tv)
        cw = rho * CPD / lv * (G / CPD - gm)
        cw = np.where((T >= 240) & (T <= 310) & (p >= 2e4) & (p <= 1.1e5), cw, np.nan)
        gamma = FAD * cw
        # Adiabatic cloud (Brenguier et al. 2000).
        tau = QEXT / 2 * lwp / (5.0 / 9.0 * RHOW * re)
        nd = np.sqrt(5) / (2 * np.pi * K) * np.sqrt(gamma * tau / (QEXT * RHOW * re**5))
        h = np.sqrt(2 * lwp / gamma)
        re_top = np.cbrt(3 * gamma * h / (4 * np.pi * RHOW * nd)) / np.cbrt(K)
        # KK2000 column autoconversion, closed form over the adiabatic profile.
        b1 = KK_B + 1
        auto = np.exp(np.log(KK_A / b1) + (1 - KK_B) * np.log(rho) - KK_C * np.log(nd * 1e-6)
                      + KK_B * np.log(gamma) + b1 * np.log(h))
        eff = auto / lwp
        r0 = DRZ_A * np.exp(DRZ_B * np.log(lwp * 1e3) - DRZ_C * np.log(nd * 1e-6))  # mm day-1 at the mean
        lwp_crit = 8.0 / 9.0 * (np.pi * RHOW * K * nd * RESTAR**3) ** 2 / gamma
        nu = np.where(np.isnan(sd), NU_DEFAULT, (lwp / sd) ** 2)
        # Sub-grid drizzle model (microphys.SubgridDrizzleModel): onset probability rising
        # linearly over [r1, r2] in the local cloud-top radius r(L) = re_top (L/lwp)^(1/6).
        gln, q = scipy.special.gammaln, scipy.special.gammaincc
        r1, r2 = RESTAR - ONSET_WIDTH / 2, RESTAR + ONSET_WIDTH / 2
        x1, x2 = nu * (r1 / re_top) ** 6, nu * (r2 / re_top) ** 6

        def moment(s):
            e0 = np.exp(gln(nu + s) - gln(nu) - s * np.log(nu))
            e1 = np.exp(gln(nu + s + 1 / 6) - gln(nu) - (s + 1 / 6) * np.log(nu))
            ramp = (re_top * e1 * (q(nu + s + 1 / 6, x1) - q(nu + s + 1 / 6, x2))
                    - r1 * e0 * (q(nu + s, x1) - q(nu + s, x2))) / (r2 - r1)
            return e0 * q(nu + s, x2) + np.maximum(ramp, 0)

        pop = moment(0.0)
        drizzle = r0 * moment(DRZ_B)
        intensity = np.where(pop > 0, drizzle / pop, np.nan)
        # Screening.
        qc = np.zeros(lwp.shape, np.int64)
        qc |= np.where(np.isnan(lwp) | np.isnan(re), QC_MISSING, 0)
        qc |= np.where((lwp < MIN_LWP) | (tau < MIN_TAU), QC_THIN, 0)
        qc |= np.where((re < RE_MIN) | (re > RE_MAX), QC_RE, 0)
        qc |= np.where(T < MIN_CTT, QC_ICE, 0)
        qc |= np.where(~((nd >= ND_MIN) & (nd <= ND_MAX)) & (qc == 0), QC_ND, 0)
        qc |= np.where(~(h <= H_MAX) & (qc == 0), QC_H, 0)
        bad = qc != 0
        qc |= np.where(np.isnan(sd), QC_GAMMA_ASSUMED, 0) | QC_RH_ASSUMED | QC_BASE_ASSUMED
        out = {
            "liquid_water_path": (lwp * 1e3, "g m-2"),
            "droplet_number": (nd * 1e-6, "cm-3"),
            "cloud_thickness": (h, "m"),
            "condensation_rate": (cw * 1e6, "g m-3 km-1"),
            "adiabatic_top_effective_radius": (re_top * 1e6, "um"),
            "column_autoconversion_rate": (auto, "kg m-2 s-1"),
            "autoconversion_efficiency": (eff, "s-1"),
            "cloud_base_drizzle_rate": (drizzle, "mm day-1"),
            "cloud_base_drizzle_intensity": (intensity, "mm day-1"),
            "drizzle_probability": (pop, "1"),
            "critical_lwp": (lwp_crit * 1e3, "g m-2"),
        }
        for k, (a, u) in out.items():
            if k != "liquid_water_path":
                a[bad] = np.nan
    t2 = time.perf_counter()

    dims = lwp_v.dims
    res = xr.Dataset(coords={d: ds[d] for d in dims if d in ds.variables})
    enc = {}
    base = {"zlib": True, "complevel": 1, "shuffle": True}
    if chunks is not None:
        base["chunksizes"] = tuple(min(c, n) for c, n in zip(chunks, lwp.shape))
    for k, (a, u) in out.items():
        res[k] = xr.DataArray(a.astype(np.float32), dims=dims, attrs={"units": u, "ancillary_variables": "warm_rain_qc"})
        enc[k] = dict(base, dtype="float32", _FillValue=np.float32(-999))
    res["warm_rain_qc"] = xr.DataArray(qc.astype(np.uint32), dims=dims, attrs={"standard_name": "quality_flag"})
    enc["warm_rain_qc"] = dict(base, dtype="uint32", _FillValue=None)  # as warmrain writes it (no fill)
    res.attrs["Conventions"] = "CF-1.13"
    res.attrs["source"] = "bench/bulk_xarray.py (benchmark reference script)"
    res.to_netcdf(dst, format="NETCDF4", encoding=enc)  # uint32 needs netCDF-4 (not classic)
    t3 = time.perf_counter()
    print("bulk_xarray: read %.3f compute %.3f write %.3f total %.3f columns %d"
          % (t1 - t0, t2 - t1, t3 - t2, t3 - t0, lwp.size), file=sys.stderr)


if __name__ == "__main__":
    main(sys.argv[1:])
