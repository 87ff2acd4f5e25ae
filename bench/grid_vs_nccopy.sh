#!/bin/sh
# grid_vs_nccopy.sh: time grid's I/O path against nccopy on the same file.
#
# Builds a 4000 x 4000 netCDF-4 input (float32 lwp and re, deflate 1, shuffle,
# chunks 500 x 500) with the grid test binary, then times
#   (a) nccopy -d 1 -s in.nc out.nc          (libnetcdf's own copy, same compression)
#   (b) grid: Open + Create + Process (I/O only) + Commit, writing two float32
#       variables with deflate 1 + shuffle
# and prints wall time, MB/s of uncompressed field data (2 x N*N*4 bytes) and
# peak RSS (GNU time, Debian package "time"). Usage: bench/grid_vs_nccopy.sh [N]
set -eu
N=${1:-4000}
cd "$(dirname "$0")/.."
command -v nccopy >/dev/null || { echo "nccopy missing: apt-get install netcdf-bin" >&2; exit 1; }
[ -x /usr/bin/time ] || { echo "/usr/bin/time missing: apt-get install time" >&2; exit 1; }
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
go test -c -o "$work/grid.test" ./grid
GRID_TEST_HELPER=mkbench GRID_BENCH_N=$N "$work/grid.test" "$work/in.nc"
bytes=$((2 * N * N * 4))
measure() { # name, command...
	name=$1
	shift
	/usr/bin/time -v -o "$work/time.txt" "$@" >/dev/null
	wall=$(awk -F': ' '/Elapsed \(wall clock\)/ {n=split($2,a,":"); s=0; for(i=1;i<=n;i++) s=s*60+a[i]; print s}' "$work/time.txt")
	rss=$(awk -F': ' '/Maximum resident set size/ {print $2}' "$work/time.txt")
	mbs=$(awk -v b="$bytes" -v w="$wall" 'BEGIN {printf "%.1f", b / 1e6 / w}')
	printf '%-8s %8.2f s %8s MB/s %8.1f MB peak RSS\n' "$name" "$wall" "$mbs" "$(awk -v r="$rss" 'BEGIN {print r/1024}')"
	echo "$wall" >"$work/$name.wall"
}
echo "input: ${N}x${N} float32 lwp + re, deflate 1, shuffle, chunks 500x500 ($(du -h "$work/in.nc" | cut -f1) on disk)"
measure nccopy nccopy -d 1 -s "$work/in.nc" "$work/nccopy.nc"
measure grid env GRID_TEST_HELPER=rw "$work/grid.test" "$work/in.nc" "$work/grid.nc"
awk -v a="$(cat "$work/grid.wall")" -v b="$(cat "$work/nccopy.wall")" 'BEGIN {printf "grid/nccopy wall-time ratio: %.2f\n", a / b}'
