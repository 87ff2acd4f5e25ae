#!/usr/bin/env bash
# bench/run.sh: the benchmark suite of warmrain, run by `make bench`.
#
# Builds warmrain and bench/mkinput, writes synthetic inputs (N x N columns of float32
# LWP, LWP standard deviation, r_e, cloud-top T and p; deflate 1 + shuffle, chunks
# 1000 x 1000; plus an int16-packed and a contiguous uncompressed variant), then
# measures side by side in one run, on the same files, wall time and peak RSS
# (GNU time -v) of:
#   (a)  nccopy -d 1 -s IN OUT                   libnetcdf's own copy, same compression
#   (b)  warmrain process --io-only              read inputs, write every output, no physics
#   (b') warmrain process --io-only --no-collector   the same for the bulk output set
#   (c)  warmrain process                        every diagnostic (--threads 0: every core)
#   (c1) the same with --threads 1; (cL) with --writer libnetcdf (compression on libnetcdf's thread)
#   (d)  warmrain process --no-collector         bulk diagnostics only
#   (e)  bench/bulk_xarray.py                    an analyst's xarray/numpy/scipy script (bulk set)
#   (c) with the table cache off (a first run: the tables are integrated)
#   (f)  nccopy -d 1 -s of (b)'s and of (c)'s output: what their contents cost to compress
#   (b) again while another process keeps the other core busy: what sharing the machine costs
#   (b)/(c) again on the int16-packed and the contiguous inputs
#   the archive case: 8 files of 2000² with --jobs 1 and --jobs 2 (outputs compared)
# and prints one table (wall s, columns/s, peak RSS, ratios to (b) and (e), CPU s,
# output MB) with the ratios side by side; the table is also written to
# BENCH_DIR/results.txt, with a check that the script's values equal warmrain's.
# (b) writes the same output variables as (c), filled with the decoded inputs. The per-column kernel figures come from
# `go test -bench 'BenchmarkColumn(All|Bulk)$' ./microphys` (one core).
#
# Environment:
#   QUICK=1                  a quick run: SIZES=1000, FLAT_SIZE=2000, EXTRA=0, KERNEL=0 (about a minute)
#   SIZES="1000 2000 4000"  grid sides (8000 is optional: SIZES="1000 2000 4000 8000")
#   FLAT_SIZE=8000           one more size at which only (c) runs, for the flat-RSS target (0: skip)
#   EXTRA=0                  1: also the cases beyond the targets (table cache off, other core busy,
#                            nccopy of the outputs, packed and contiguous inputs, archive, levers)
#   VARIANT_SIZES=$SIZES     sizes that also run the packed and contiguous variants (EXTRA=1)
#   BENCH_DIR=/tmp/warmrain-bench   scratch folder (inputs are kept and reused)
#   REPEAT=1                 runs per case (the table keeps the fastest, and the largest RSS)
#   ARCHIVE=1                run the archive case (0: skip)
#   KERNEL=1                 run the microphys kernel benchmarks (0: skip)
#   LEVERS=1                 output-size levers of (b) at LEVER_SIZE (default 2000): --deflate 0,
#                            --deflate 4, --significant-digits 3, --pack, --slab-mb 8 and 128
#                            (slabs, and so output chunks, of a quarter and four times the default) (0: skip)
#   SCRIPT_MAX=4000          largest size for the xarray script (it holds ~370 bytes per column:
#                            8000² would need ~24 GB)
#   PY=/usr/bin/python3      Debian's python3 with xarray, numpy, scipy, netCDF4
# The page cache is not dropped: every case reads inputs that are already cached.
# The machine is shared; run when it is quiet, or use REPEAT=3.
set -euo pipefail
cd "$(dirname "$0")/.."
ROOT=$PWD
if [ "${QUICK:-0}" = 1 ]; then
	SIZES=${SIZES:-1000} FLAT_SIZE=${FLAT_SIZE:-2000} EXTRA=${EXTRA:-0} KERNEL=${KERNEL:-0}
fi
SIZES=${SIZES:-"1000 2000 4000"}
FLAT_SIZE=${FLAT_SIZE:-8000}
EXTRA=${EXTRA:-0}
if [ "$EXTRA" != 1 ]; then
	ARCHIVE=${ARCHIVE:-0} LEVERS=${LEVERS:-0}
fi
VARIANT_SIZES=${VARIANT_SIZES:-$SIZES}
BENCH_DIR=${BENCH_DIR:-/tmp/warmrain-bench}
REPEAT=${REPEAT:-1}
ARCHIVE=${ARCHIVE:-1}
KERNEL=${KERNEL:-1}
LEVERS=${LEVERS:-1}
LEVER_SIZE=${LEVER_SIZE:-2000}
SCRIPT_MAX=${SCRIPT_MAX:-4000}
PY=${PY:-/usr/bin/python3}
GO=${GO:-go}

log() { echo "bench: $*" >&2; }

# GNU time (Debian package "time") for wall time and peak RSS.
if [ ! -x /usr/bin/time ]; then
	log "installing GNU time (Debian package time)"
	SUDO=""
	[ "$(id -u)" = 0 ] || SUDO=sudo
	DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -qq --no-install-recommends -o DPkg::Lock::Timeout=300 time >/dev/null
fi
command -v nccopy >/dev/null || { log "nccopy missing: apt-get install netcdf-bin"; exit 1; }
"$PY" -c 'import xarray, numpy, scipy, netCDF4' 2>/dev/null ||
	{ log "$PY lacks xarray/numpy/scipy/netCDF4: apt-get install python3-xarray python3-scipy python3-netcdf4"; exit 1; }

mkdir -p "$BENCH_DIR/bin" "$BENCH_DIR/in" "$BENCH_DIR/out" "$BENCH_DIR/log"
WR=$BENCH_DIR/bin/warmrain
MK=$BENCH_DIR/bin/mkinput
log "building warmrain and mkinput"
$GO build -o "$WR" ./cmd/warmrain
$GO build -o "$MK" ./bench/mkinput

RAW=$BENCH_DIR/raw.tsv
: >"$RAW"
: >"$BENCH_DIR/script_times.tsv"
: >"$BENCH_DIR/kernel.tsv"
rm -f "$BENCH_DIR/archive_identical.txt" "$BENCH_DIR/writers_identical.txt"

# Inputs are deterministic: reuse them while the generator (bench/synth) is unchanged.
stamp=$(cat bench/synth/synth.go bench/mkinput/main.go | sha256sum | cut -c1-16)
if [ "$(cat "$BENCH_DIR/in/stamp" 2>/dev/null)" != "$stamp" ]; then
	rm -f "$BENCH_DIR"/in/*.nc
	echo "$stamp" >"$BENCH_DIR/in/stamp"
fi
mkin() { # file, mkinput args...
	local f=$1
	shift
	if [ ! -s "$f" ]; then
		log "writing $(basename "$f")"
		"$MK" "$@" -o "$f"
	fi
}

# measure CASE SIZE COLUMNS OUTPUT command...: runs the command REPEAT times with a
# fresh output, appends "case size columns wall rss_kb cpu_s output_bytes" per run to raw.tsv.
measure() {
	local case=$1 size=$2 cols=$3 out=$4
	shift 4
	local r t
	for ((r = 1; r <= REPEAT; r++)); do
		rm -rf "$out"
		t=$BENCH_DIR/log/$case-$size.time
		if ! /usr/bin/time -v -o "$t" "$@" >"$BENCH_DIR/log/$case-$size.out" 2>"$BENCH_DIR/log/$case-$size.err"; then
			log "FAILED: $case $size: $* (see $BENCH_DIR/log/$case-$size.err)"
			tail -5 "$BENCH_DIR/log/$case-$size.err" >&2
			return 1
		fi
		awk -v c="$case" -v s="$size" -v n="$cols" -F': ' '
			/Elapsed \(wall clock\)/ {k=split($2,a,":"); w=0; for(i=1;i<=k;i++) w=w*60+a[i]}
			/User time \(seconds\)/ {u=$2}
			/System time \(seconds\)/ {y=$2}
			/Maximum resident set size/ {m=$2}
			END {printf "%s\t%s\t%s\t%.3f\t%s\t%.2f\t", c, s, n, w, m, u+y}' "$t" >>"$RAW"
		du -sb "$out" 2>/dev/null | cut -f1 >>"$RAW" || echo 0 >>"$RAW"
		log "$(tail -1 "$RAW" | awk -F'\t' '{printf "%-12s %5s² %8.2f s %8.1f MB %8.2f CPU s %8.1f MB out", $1, $2, $4, $5/1024, $6, $7/1e6}')"
	done
}

chunks_of() { # file var -> "cy,cx" of the variable's chunks
	ncdump -hs "$1" | awk -v v="$2" '$0 ~ "\t\t"v":_ChunkSizes" {sub(/.*= /,""); sub(/ ;.*/,""); gsub(/ /,""); print}'
}

for n in $SIZES; do
	in=$BENCH_DIR/in/in_$n.nc
	mkin "$in" -n "$n" -variant deflate
	[ "$EXTRA" = 1 ] || continue
	case " $VARIANT_SIZES " in *" $n "*)
		mkin "$BENCH_DIR/in/in_${n}_packed.nc" -n "$n" -variant packed
		mkin "$BENCH_DIR/in/in_${n}_plain.nc" -n "$n" -variant plain
		;;
	esac
done

# The collector/evaporation tables are built once and kept in a cache folder of the
# benchmark (as in a user's cache after the first run); (c) table cache off measures a
# first run.
export WARMRAIN_TABLE_CACHE=$BENCH_DIR/tables
mkdir -p "$WARMRAIN_TABLE_CACHE"
"$WR" column --lwp 100 --re 12 >/dev/null

info=$BENCH_DIR/info.txt
{
	echo "warmrain benchmark (bench/run.sh), $(date -u +%Y-%m-%dT%H:%M:%SZ), $(nproc) cores, $(uname -m), $(nc-config --version 2>/dev/null || echo 'netCDF ?'), $(go version | cut -d' ' -f3)"
	echo "warmrain $(git -C "$ROOT" rev-parse --short HEAD 2>/dev/null || echo '?')$(git -C "$ROOT" diff --quiet 2>/dev/null || echo '+dirty'); inputs: float32 deflate 1 + shuffle, chunks 1000², 5 variables; outputs deflate 1 + shuffle"
	echo "sizes: $SIZES (flat-RSS size: $FLAT_SIZE; extra cases: $EXTRA), repeats: $REPEAT; wall and peak RSS from GNU time -v; page cache warm; table cache warm unless said"
	echo "load average at the start (1, 5, 15 min): $(cut -d' ' -f1-3 /proc/loadavg) on $(nproc) cores (other processes share the machine: compare ratios of this run only)"
} >"$info"

for n in $SIZES; do
	cols=$((n * n))
	in=$BENCH_DIR/in/in_$n.nc
	o=$BENCH_DIR/out
	log "== $n x $n"
	measure a "$n" "$cols" "$o/a_$n.nc" nccopy -d 1 -s "$in" "$o/a_$n.nc"
	measure b "$n" "$cols" "$o/b_$n.nc" "$WR" process "$in" -o "$o/b_$n.nc" --io-only -q --pipeline-stats
	measure b_bulk "$n" "$cols" "$o/bb_$n.nc" "$WR" process "$in" -o "$o/bb_$n.nc" --io-only --no-collector -q
	measure c "$n" "$cols" "$o/c_$n.nc" "$WR" process "$in" -o "$o/c_$n.nc" -q --pipeline-stats
	measure c1 "$n" "$cols" "$o/c1_$n.nc" "$WR" process "$in" -o "$o/c1_$n.nc" -q --pipeline-stats --threads 1
	measure cL "$n" "$cols" "$o/cL_$n.nc" "$WR" process "$in" -o "$o/cL_$n.nc" -q --pipeline-stats --writer libnetcdf
	# The two writers store the same data (bench/cmp_outputs.py compares every variable).
	if "$PY" bench/cmp_outputs.py "$o/c_$n.nc" "$o/cL_$n.nc" 2>"$BENCH_DIR/log/cmp-c-cL-$n.txt"; then
		echo "$n yes" >>"$BENCH_DIR/writers_identical.txt"
	else
		echo "$n no" >>"$BENCH_DIR/writers_identical.txt"
	fi
	measure d "$n" "$cols" "$o/d_$n.nc" "$WR" process "$in" -o "$o/d_$n.nc" --no-collector -q
	if [ "$n" -le "$SCRIPT_MAX" ]; then
		ch=$(chunks_of "$o/d_$n.nc" droplet_number)
		measure e "$n" "$cols" "$o/e_$n.nc" "$PY" bench/bulk_xarray.py "$in" "$o/e_$n.nc" --chunks "${ch:-1000,1000}"
		grep -h '^bulk_xarray:' "$BENCH_DIR/log/e-$n.err" | tail -1 |
			awk -v n="$n" '{print n "\t" $3 "\t" $5 "\t" $7}' >>"$BENCH_DIR/script_times.tsv"
		"$PY" bench/cmp_outputs.py --values "$o/d_$n.nc" "$o/e_$n.nc" >"$BENCH_DIR/log/cmp-d-e-$n.txt" || true
	else
		log "skipping the xarray script at $n² (SCRIPT_MAX=$SCRIPT_MAX)"
	fi
	if [ "$EXTRA" != 1 ]; then
		rm -f "$o"/*_"$n".nc
		continue
	fi
	measure c_nocache "$n" "$cols" "$o/cn_$n.nc" env WARMRAIN_TABLE_CACHE=off "$WR" process "$in" -o "$o/cn_$n.nc" -q
	# What sharing the machine costs the I/O thread: (b) while another process keeps the
	# other core busy (sha256sum of /dev/zero; no memory traffic to speak of).
	sha256sum /dev/zero &
	hog=$!
	measure b_hog "$n" "$cols" "$o/bh_$n.nc" "$WR" process "$in" -o "$o/bh_$n.nc" --io-only -q --pipeline-stats
	kill "$hog"
	wait "$hog" 2>/dev/null || true
	# What the outputs' contents cost to compress: libnetcdf copying (b)'s and (c)'s outputs.
	measure f_b "$n" "$cols" "$o/fb_$n.nc" nccopy -d 1 -s "$o/b_$n.nc" "$o/fb_$n.nc"
	measure f_c "$n" "$cols" "$o/fc_$n.nc" nccopy -d 1 -s "$o/c_$n.nc" "$o/fc_$n.nc"
	case " $VARIANT_SIZES " in *" $n "*)
		for v in packed plain; do
			vin=$BENCH_DIR/in/in_${n}_$v.nc
			measure "b_$v" "$n" "$cols" "$o/b_${v}_$n.nc" "$WR" process "$vin" -o "$o/b_${v}_$n.nc" --io-only -q
			measure "c_$v" "$n" "$cols" "$o/c_${v}_$n.nc" "$WR" process "$vin" -o "$o/c_${v}_$n.nc" -q
		done
		;;
	esac
	rm -f "$o"/*_"$n".nc # keep the scratch folder small; logs stay
done

if [ "$FLAT_SIZE" != 0 ]; then
	n=$FLAT_SIZE
	log "== $n x $n: every diagnostic only (peak RSS against size)"
	in=$BENCH_DIR/in/in_$n.nc
	mkin "$in" -n "$n" -variant deflate
	measure c "$n" $((n * n)) "$BENCH_DIR/out/c_$n.nc" "$WR" process "$in" -o "$BENCH_DIR/out/c_$n.nc" -q --pipeline-stats
	rm -f "$BENCH_DIR/out/c_$n.nc"
fi

if [ "$ARCHIVE" = 1 ]; then
	log "== archive: 8 files of 2000², --jobs 1 vs --jobs 2"
	ad=$BENCH_DIR/in/archive
	mkdir -p "$ad"
	for k in 0 1 2 3 4 5 6 7; do
		mkin "$ad/day$k.nc" -n 2000 -variant deflate -y0 $((k * 500)) -x0 $((k * 700))
	done
	for j in 1 2; do
		od=$BENCH_DIR/out/archive_jobs$j
		rm -rf "$od"
		measure "jobs$j" 0 $((8 * 2000 * 2000)) "$od" bash -c 'mkdir -p "$1" && exec "$2" process "$3"/day?.nc -o "$1" --jobs "$4" -q' _ "$od" "$WR" "$ad" "$j"
	done
	same=yes
	for k in 0 1 2 3 4 5 6 7; do
		f1=$(ls "$BENCH_DIR"/out/archive_jobs1/*day$k*.nc)
		f2=$(ls "$BENCH_DIR"/out/archive_jobs2/*day$k*.nc)
		"$PY" bench/cmp_outputs.py "$f1" "$f2" || same=no
	done
	echo "$same (8 pairs, data and attributes except history/date_created)" >"$BENCH_DIR/archive_identical.txt"
	rm -rf "$BENCH_DIR"/out/archive_jobs?
fi

if [ "$LEVERS" = 1 ]; then
	n=$LEVER_SIZE
	log "== output levers of the I/O floor (b), $n²"
	in=$BENCH_DIR/in/in_$n.nc
	mkin "$in" -n "$n" -variant deflate
	o=$BENCH_DIR/out
	measure b_d0 "$n" $((n * n)) "$o/l_$n.nc" "$WR" process "$in" -o "$o/l_$n.nc" --io-only --deflate 0 -q
	measure b_d4 "$n" $((n * n)) "$o/l_$n.nc" "$WR" process "$in" -o "$o/l_$n.nc" --io-only --deflate 4 -q
	measure b_q3 "$n" $((n * n)) "$o/l_$n.nc" "$WR" process "$in" -o "$o/l_$n.nc" --io-only --significant-digits 3 -q
	measure c_q3 "$n" $((n * n)) "$o/l_$n.nc" "$WR" process "$in" -o "$o/l_$n.nc" --significant-digits 3 -q
	measure b_slab8 "$n" $((n * n)) "$o/l_$n.nc" "$WR" process "$in" -o "$o/l_$n.nc" --io-only --slab-mb 8 -q
	measure b_slab128 "$n" $((n * n)) "$o/l_$n.nc" "$WR" process "$in" -o "$o/l_$n.nc" --io-only --slab-mb 128 -q
	measure b_pack "$n" $((n * n)) "$o/l_$n.nc" "$WR" process "$in" -o "$o/l_$n.nc" --io-only --pack -q
	measure c_pack "$n" $((n * n)) "$o/l_$n.nc" "$WR" process "$in" -o "$o/l_$n.nc" --pack -q
	rm -f "$o/l_$n.nc"
fi

if [ "$KERNEL" = 1 ]; then
	log "== kernel: go test -bench BenchmarkColumn(All|Bulk) ./microphys (one core)"
	GOMAXPROCS=1 $GO test -run '^$' -bench 'BenchmarkColumn(All|Bulk)$' -benchtime 2000000x ./microphys |
		tee "$BENCH_DIR/log/kernel.txt" |
		awk '/^BenchmarkColumn/ {name=$1; sub(/^Benchmark/,"",name); sub(/-[0-9]+$/,"",name); print name "\t" $3}' >"$BENCH_DIR/kernel.tsv"
fi

echo "load average at the end (1, 5, 15 min): $(cut -d' ' -f1-3 /proc/loadavg)" >>"$info"
"$PY" bench/report.py "$BENCH_DIR" | tee "$BENCH_DIR/results.txt"
for n in $SIZES; do
	[ -s "$BENCH_DIR/log/cmp-d-e-$n.txt" ] && { echo "script vs warmrain --no-collector, $n²:"; sed 's/^/  /' "$BENCH_DIR/log/cmp-d-e-$n.txt"; } >>"$BENCH_DIR/results.txt"
done
log "table written to $BENCH_DIR/results.txt"
