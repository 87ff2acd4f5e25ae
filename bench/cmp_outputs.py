#!/usr/bin/python3
"""Compare two warmrain outputs: every variable's data (NaN equal to NaN), dtype and
attributes, and the global attributes except the ones that name the run (history,
date_created). Exit 0 when identical, 1 with the differences on stderr.

Usage: /usr/bin/python3 bench/cmp_outputs.py A.nc B.nc
       /usr/bin/python3 bench/cmp_outputs.py --values A.nc B.nc
With --values only the data of the variables both files hold are compared (decoded, NaN
for fill): it prints, per variable, the largest relative difference and the number of
columns that are missing in one file only (exit 0 always). The benchmark uses it to
check that the analyst's script computes what warmrain computes.
"""

import sys

import netCDF4
import numpy as np

IGNORED_GLOBALS = {"history", "date_created"}


def main(a_path, b_path):
    diffs = []
    with netCDF4.Dataset(a_path) as a, netCDF4.Dataset(b_path) as b:
        ga = {k: a.getncattr(k) for k in a.ncattrs() if k not in IGNORED_GLOBALS}
        gb = {k: b.getncattr(k) for k in b.ncattrs() if k not in IGNORED_GLOBALS}
        if sorted(ga) != sorted(gb):
            diffs.append("global attribute names differ: %s vs %s" % (sorted(ga), sorted(gb)))
        for k in sorted(set(ga) & set(gb)):
            if str(ga[k]) != str(gb[k]):
                diffs.append("global %s: %r vs %r" % (k, ga[k], gb[k]))
        if sorted(a.variables) != sorted(b.variables):
            diffs.append("variables differ: %s vs %s" % (sorted(a.variables), sorted(b.variables)))
        for name in sorted(set(a.variables) & set(b.variables)):
            va, vb = a.variables[name], b.variables[name]
            va.set_auto_maskandscale(False)
            vb.set_auto_maskandscale(False)
            if va.dtype != vb.dtype or va.dimensions != vb.dimensions:
                diffs.append("%s: type/dims %s%s vs %s%s" % (name, va.dtype, va.dimensions, vb.dtype, vb.dimensions))
                continue
            aa = {k: str(va.getncattr(k)) for k in va.ncattrs()}
            ab = {k: str(vb.getncattr(k)) for k in vb.ncattrs()}
            if aa != ab:
                diffs.append("%s: attributes differ" % name)
            x, y = va[...], vb[...]
            eq = np.array_equal(x, y, equal_nan=True) if x.dtype.kind == "f" else np.array_equal(x, y)
            if not eq:
                diffs.append("%s: data differ" % name)
    for d in diffs:
        print("cmp_outputs: %s vs %s: %s" % (a_path, b_path, d), file=sys.stderr)
    return 1 if diffs else 0


def values(a_path, b_path):
    with netCDF4.Dataset(a_path) as a, netCDF4.Dataset(b_path) as b:
        for name in sorted(set(a.variables) & set(b.variables)):
            va, vb = a.variables[name], b.variables[name]
            if len(va.dimensions) < 2 or va.dtype.kind != "f":
                continue
            x = np.ma.filled(va[...].astype(np.float64), np.nan)
            y = np.ma.filled(vb[...].astype(np.float64), np.nan)
            only = int(np.sum(np.isnan(x) != np.isnan(y)))
            both = ~np.isnan(x) & ~np.isnan(y)
            with np.errstate(invalid="ignore", divide="ignore"):
                rel = np.abs(x[both] - y[both]) / np.maximum(np.abs(x[both]), np.finfo(np.float32).tiny)
            big = float(np.max(rel)) if rel.size else 0.0
            # POP spans tens of decades: report the relative error where it matters too.
            sig = np.abs(x[both]) > 1e-6 * np.max(np.abs(x[both])) if rel.size else both[both]
            big_sig = float(np.max(rel[sig])) if rel.size and sig.any() else 0.0
            print("%-32s max rel diff %.2e (values > 1e-6 of max: %.2e), missing in one only: %d"
                  % (name, big, big_sig, only))
    return 0


if __name__ == "__main__":
    if len(sys.argv) == 4 and sys.argv[1] == "--values":
        sys.exit(values(sys.argv[2], sys.argv[3]))
    if len(sys.argv) != 3:
        sys.exit(__doc__)
    sys.exit(main(sys.argv[1], sys.argv[2]))
