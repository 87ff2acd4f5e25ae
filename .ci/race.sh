#!/usr/bin/env bash
# .ci/race.sh: the race detector over every package with concurrency, run by .ci/run and
# `make check`:
#   grid               the I/O goroutine and the slab workers (all tests)
#   cmd/internal/batch shards, the process pool and the manifest (all tests)
#   microphys          the parallel table build of NewModel (one test that builds a model)
#   cmd/internal/app   the process pipeline with several compute goroutines, two runs on one
#                      output, the table cache (the in-process concurrent tests: the whole
#                      package under -race takes far longer than the CI budget)
set -euo pipefail
cd "$(dirname "$0")/.."
GO="${GO:-go}"
echo "== go test -race"
"$GO" test -race -count=1 ./grid ./cmd/internal/batch
"$GO" test -race -count=1 -run '^TestComplete$' ./microphys
"$GO" test -race -count=1 -timeout 20m -run '^(TestProcessThreadsAgree|TestProcessTwoRunsOneOutput|TestTableCache|TestProcessSampleEqualsMicrophys)$' ./cmd/internal/app
