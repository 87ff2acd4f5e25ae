#!/usr/bin/env bash
# .ci/race.sh: the race detector over the packages with concurrency, run by .ci/run and
# `make check`: grid (the I/O goroutine and the slab workers), cmd/internal/batch (shards and
# the manifest) and cmd/internal/app (the process pool and signal handling).
set -euo pipefail
cd "$(dirname "$0")/.."
GO="${GO:-go}"
echo "== go test -race"
"$GO" test -race -count=1 ./grid ./cmd/internal/batch ./cmd/internal/app
