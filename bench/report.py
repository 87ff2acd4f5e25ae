#!/usr/bin/python3
"""Format the measurements of bench/run.sh as one table plus the ratios of issue 5.

Usage: /usr/bin/python3 bench/report.py BENCH_DIR
Reads BENCH_DIR/raw.tsv (case, size, columns, wall s, peak RSS KB, CPU s, output bytes;
one line per run),
BENCH_DIR/script_times.tsv (size, read, compute, write s of bulk_xarray.py),
BENCH_DIR/kernel.tsv (benchmark name, ns per column) and BENCH_DIR/info.txt.
"""

import math
import os
import sys

CASES = [  # key, label
    ("a", "(a) nccopy -d 1 -s"),
    ("b", "(b) warmrain --io-only"),
    ("c", "(c) warmrain (all)"),
    ("c1", "(c1) all, --threads 1"),
    ("cL", "(cL) all, --writer libnetcdf"),
    ("d", "(d) warmrain --no-collector"),
    ("e", "(e) xarray script (bulk)"),
    ("b_bulk", "(b') --io-only --no-collector"),
    ("b_packed", "(b) io-only, int16 input"),
    ("c_packed", "(c) all, int16 input"),
    ("b_plain", "(b) io-only, contiguous input"),
    ("c_plain", "(c) all, contiguous input"),
    ("b_d0", "(b) io-only --deflate 0"),
    ("b_d4", "(b) io-only --deflate 4"),
    ("b_q3", "(b) io-only --significant-digits 3"),
    ("c_q3", "(c) all --significant-digits 3"),
    ("b_slab8", "(b) io-only --slab-mb 8"),
    ("b_slab128", "(b) io-only --slab-mb 128"),
    ("b_pack", "(b) io-only --pack"),
    ("c_pack", "(c) all --pack"),
    ("c_nocache", "(c) all, table cache off"),
    ("b_hog", "(b) io-only, other core busy"),
    ("f_b", "(f) nccopy of (b)'s output"),
    ("f_c", "(f) nccopy of (c)'s output"),
]
LABEL = dict(CASES)
# The I/O floor each case is compared to.
FLOOR = {"c_pack": "b_pack", "b_pack": "b_pack", "c_packed": "b_packed", "b_packed": "b_packed", "c_plain": "b_plain", "b_plain": "b_plain"}


def read_tsv(path):
    if not os.path.exists(path):
        return []
    with open(path) as f:
        return [line.rstrip("\n").split("\t") for line in f if line.strip() and not line.startswith("#")]


def pipeline_stats(d, case, n):
    """The --pipeline-stats line of a case's log: (wall, io, compute) seconds, or None."""
    path = os.path.join(d, "log", "%s-%d.err" % (case, n))
    if not os.path.exists(path):
        return None
    for line in open(path):
        if ": pipeline " in line:
            try:
                wall = float(line.split("wall ")[1].split(" s")[0])
                io = float(line.split("I/O thread ")[1].split(" s")[0])
                comp = float(line.split("compute ")[1].split(" s")[0])
                return wall, io, comp
            except (IndexError, ValueError):
                return None
    return None


def verdict(ok):
    return "MET" if ok else "NOT MET"


def perf_targets(d, runs, sizes, p):
    """The targets of the parallel chunk writer: (c) against nccopy and the script,
    peak RSS against size, output bytes of the two writers, --threads 1 and 2."""
    p("Targets of the parallel chunk writer (ratios of this run):")
    n4 = 4000 if 4000 in sizes else (max(sizes) if sizes else 0)
    a, c = runs.get(("a", n4)), runs.get(("c", n4))
    if a and c:
        p("  (c)/(a) wall, every diagnostic vs nccopy -d 1 -s, %d²: %.2f  (<= 1.0) %s" % (n4, c[1] / a[1], verdict(c[1] / a[1] <= 1.0)))
        p("  (c)/(a) CPU-seconds, %d²: %.2f  (<= 2.0) %s" % (n4, c[3] / a[3], verdict(c[3] / a[3] <= 2.0)))
    b = runs.get(("b", n4))
    if a and b and c:
        p("  where (c)'s CPU goes, %d²: reading the inputs and writing every output, (b) --io-only: %.2f x nccopy's CPU;"
          " the physics, (c) - (b): %.2f x; output bytes %.1f x nccopy's" % (n4, b[3] / a[3], (c[3] - b[3]) / a[3], c[4] / a[4]))
    e, d_ = runs.get(("e", n4)), runs.get(("d", n4))
    if e and d_:
        p("  (e)/(d) xarray script vs warmrain (same bulk outputs), %d², whole run: %.2f  (>= 4) %s; CPU-seconds: %.2f  (>= 3) %s" % (
            n4, e[1] / d_[1], verdict(e[1] / d_[1] >= 4), e[3] / d_[3], verdict(e[3] / d_[3] >= 3)))
    if e and c:
        p("  (e)/(c) xarray script (bulk) vs warmrain with every diagnostic, %d²: wall %.2f, CPU-seconds %.2f" % (n4, e[1] / c[1], e[3] / c[3]))
    cs = sorted((n, runs[("c", n)][2]) for (k, n) in runs if k == "c")
    if cs:
        m = max(r for _, r in cs)
        p("  peak RSS of (c): %s MB; largest %.0f MB  (<= 256) %s; largest/smallest %.2f  (flat: <= 1.25) %s" % (
            " -> ".join("%d²: %.0f" % (n, r) for n, r in cs), m, verdict(m <= 256),
            cs[-1][1] / cs[0][1], verdict(cs[-1][1] / cs[0][1] <= 1.25 and cs[-1][0] >= 4 * cs[0][0])))
    for n in sizes:
        c, cl = runs.get(("c", n)), runs.get(("cL", n))
        if c and cl:
            r = c[4] / cl[4]
            p("  output bytes, direct writer / libnetcdf writer, %d²: %.4f  (within 2 %%) %s; wall %.2f, CPU-seconds %.2f" % (
                n, r, verdict(abs(r - 1) <= 0.02), c[1] / cl[1], c[3] / cl[3]))
    same = os.path.join(d, "writers_identical.txt")
    if os.path.exists(same):
        p("  data of the two writers identical (bench/cmp_outputs.py): " + ", ".join(
            "%s²: %s" % tuple(l.split()) for l in open(same).read().split("\n") if l.strip()))
    for n in sizes:
        c, c1 = runs.get(("c", n)), runs.get(("c1", n))
        if c and c1:
            p("  --threads 1 / --threads %d (every core), %d²: wall %.2f, CPU-seconds %.2f" % (os.cpu_count() or 0, n, c1[1] / c[1], c1[3] / c[3]))
    for n in sizes:
        parts = []
        for key in ("c", "c1", "cL"):
            st = filter_stats(d, key, n)
            if st:
                parts.append("%s: %s" % (key, st))
        if parts:
            p("  pipeline %d²: " % n + "; ".join(parts))


def filter_stats(d, case, n):
    """The stage times of a --pipeline-stats line, shortened."""
    path = os.path.join(d, "log", "%s-%d.err" % (case, n))
    if not os.path.exists(path):
        return None
    for line in open(path):
        if ": pipeline " in line:
            return line.split(": ", 2)[-1].strip()
    return None


def main(d):
    runs = {}  # (case, size) -> (cols, wall, rss_mb, cpu, out_mb); best wall of the repeats, largest RSS
    for row in read_tsv(os.path.join(d, "raw.tsv")):
        case, size, cols, wall, rss, cpu = row[:6]
        outb = float(row[6]) if len(row) > 6 and row[6] else float("nan")
        key = (case, int(size))
        cur = (int(cols), float(wall), float(rss) / 1024, float(cpu), outb / 1e6)
        old = runs.get(key)
        if old is None or cur[1] < old[1]:
            runs[key] = (cur[0], cur[1], max(cur[2], old[2]) if old else cur[2], cur[3], cur[4])
    script = {int(r[0]): tuple(map(float, r[1:4])) for r in read_tsv(os.path.join(d, "script_times.tsv"))}
    kernel = {r[0]: float(r[1]) for r in read_tsv(os.path.join(d, "kernel.tsv"))}
    sizes = sorted({s for (_, s) in runs if s > 0})
    out = []
    p = out.append
    info = os.path.join(d, "info.txt")
    if os.path.exists(info):
        out.extend(open(info).read().rstrip("\n").split("\n"))
    p("")
    hdr = "%-34s %6s %9s %12s %9s %7s %7s %8s %8s" % ("case", "size", "wall s", "columns/s", "RSS MB", "/(b)", "/(e)", "CPU s", "out MB")
    p(hdr)
    p("-" * len(hdr))
    for n in sizes:
        for key, label in CASES:
            r = runs.get((key, n))
            if r is None:
                continue
            cols, wall, rss, cpu, outmb = r
            fb = runs.get((FLOOR.get(key, "b"), n))
            fe = runs.get(("e", n))
            rb = "%7.2f" % (wall / fb[1]) if fb else "%7s" % "-"
            re_ = "%7.2f" % (wall / fe[1]) if fe else "%7s" % "-"
            p("%-34s %5d² %9.2f %12.3g %9.1f %s %s %8.2f %8.1f" % (label, n, wall, cols / wall, rss, rb, re_, cpu, outmb))
        p("")
    arch = {k: runs.get((k, 0)) for k in ("jobs1", "jobs2")}
    for k, label in (("jobs1", "archive --jobs 1"), ("jobs2", "archive --jobs 2")):
        r = arch[k]
        if r:
            cols, wall, rss, cpu, outmb = r
            p("%-34s %6s %9.2f %12.3g %9.1f %7s %7s %8.2f %8.1f" % (label, "8×2000²" if cols == 8 * 2000 * 2000 else str(cols),
                                                                 wall, cols / wall, rss, "-", "-", cpu, outmb))
    p("")
    for n in sizes:
        parts = []
        for key in ("b", "b_hog", "c"):
            st = pipeline_stats(d, key, n)
            if st:
                parts.append("%s: Process %.2f s, I/O thread busy %.2f s (%.0f %%), compute %.2f s" % (
                    key, st[0], st[1], 100 * st[1] / st[0], st[2]))
        fb, fc = runs.get(("f_b", n)), runs.get(("f_c", n))
        if fb and fc:
            parts.append("nccopy of (c)'s output / of (b)'s: %.2f (what (c)'s contents cost more to compress)" % (fc[1] / fb[1]))
        if parts:
            p("Pipeline %d² (--pipeline-stats): " % n + "; ".join(parts))
    p("Script phases (s): " + "; ".join("%d²: read %.2f compute %.2f write %.2f" % ((n,) + script[n]) for n in sorted(script)))
    if kernel:
        p("Kernel (go test -bench, one core): " + ", ".join("%s %.0f ns/column" % (k, v) for k, v in sorted(kernel.items())))
    p("")
    perf_targets(d, runs, sizes, p)
    p("")
    p("Earlier targets (measured in this run):")
    big = max(sizes) if sizes else 0
    n4 = 4000 if 4000 in sizes else big
    for n in sizes:
        c, b = runs.get(("c", n)), runs.get(("b", n))
        if c and b:
            tag = verdict(c[1] / b[1] <= 1.15) if n == n4 else "(target at 4000²)"
            p("  (c)/(b) every diagnostic vs I/O floor, %d²: %.2f  (<= 1.15) %s  [CPU-s ratio %.2f]" % (n, c[1] / b[1], tag, c[3] / b[3]))
    for n in sizes:
        d_, e = runs.get(("d", n)), runs.get(("e", n))
        if d_ and e:
            tag = verdict(e[1] / d_[1] >= 2) if n == n4 else ""
            p("  (e)/(d) script vs warmrain bulk, whole run, %d²: %.2f  (>= 2) %s  [CPU-s ratio %.2f]" % (n, e[1] / d_[1], tag, e[3] / d_[3]))
    kb = kernel.get("ColumnBulk")
    ka = kernel.get("ColumnAll")
    for n in sizes:
        if n in script and kb:
            cols = n * n
            sp = script[n][1] / (kb * 1e-9 * cols)
            tag = verdict(sp >= 10) if n == n4 else ""
            extra = ""
            if ka:
                extra = "; with every diagnostic (%.0f ns/column) still %.1f x" % (ka, script[n][1] / (ka * 1e-9 * cols))
            p("  compute speed-up, script compute %.2f s vs Column bulk %.0f ns x %d columns on one core, %d²: %.1f x  (>= 10) %s%s"
              % (script[n][1], kb, cols, n, sp, tag, extra))
    for n in sizes:
        d_, bb, c, b = runs.get(("d", n)), runs.get(("b_bulk", n)), runs.get(("c", n)), runs.get(("b", n))
        if d_ and bb and n in script:
            phys = d_[3] - bb[3]
            sp = script[n][1] / phys if phys > 0 else float("inf")
            line = "  physics CPU inside the process, %d²: bulk (d)-(b') %.2f s = %.0f ns/column -> script compute / that = %.1f x" % (
                n, phys, phys * 1e9 / (n * n), sp)
            if c and b:
                line += "; every diagnostic (c)-(b) %.2f s = %.0f ns/column (tables from the warm cache)" % (c[3] - b[3], (c[3] - b[3]) * 1e9 / (n * n))
            p(line)
    wr = [(k, n, r[2]) for (k, n), r in runs.items() if k[0] in "bcd" and n > 0]
    if wr:
        k, n, m = max(wr, key=lambda t: t[2])
        p("  peak RSS of warmrain, every case and size: %.1f MB (%s %d²)  (<= 256 MB) %s" % (m, LABEL[k], n, verdict(m <= 256)))
        for key in ("b", "c", "d"):
            rs = [(n, runs[(key, n)][2]) for n in sizes if (key, n) in runs]
            if len(rs) >= 2:
                p("  RSS flat with size, %s: %s MB; largest/smallest %.2f" % (
                    LABEL[key], " -> ".join("%.0f" % r for _, r in rs), rs[-1][1] / rs[0][1]))
        es = [(n, runs[("e", n)][2]) for n in sizes if ("e", n) in runs]
        if es:
            p("  script RSS: %s MB (%.0f bytes per column at %d²)" % (
                " -> ".join("%.0f" % r for _, r in es), es[-1][1] * 1048576 / es[-1][0] ** 2, es[-1][0]))
    if arch["jobs1"] and arch["jobs2"]:
        same = open(os.path.join(d, "archive_identical.txt")).read().strip() if os.path.exists(os.path.join(d, "archive_identical.txt")) else "?"
        r = arch["jobs2"][1] / arch["jobs1"][1]
        p("  archive 8 x 2000², --jobs 2 / --jobs 1: %.2f  (<= 0.6) %s; outputs identical: %s" % (r, verdict(r <= 0.6), same))
    for key in ("a", "b", "c", "d", "e"):
        pts = [(n * n, runs[(key, n)][1]) for n in sizes if (key, n) in runs]
        if len(pts) >= 2:
            (x0, y0), (x1, y1) = pts[0], pts[-1]
            alpha = math.log(y1 / y0) / math.log(x1 / x0)
            slope = (y1 - y0) / (x1 - x0)
            icpt = y0 - slope * x0
            p("  time vs columns, %s: exponent %.2f (1 = linear), %.3g µs/column + %.2f s fixed" % (
                LABEL[key], alpha, slope * 1e6, icpt))
    return "\n".join(out)


if __name__ == "__main__":
    if len(sys.argv) != 2:
        sys.exit(__doc__)
    print(main(sys.argv[1]))
