#!/usr/bin/env bash
# A short run of every fuzz target (the seed corpora run in make test anyway).
set -euo pipefail
cd "$(dirname "$0")/.."
t=${FUZZTIME:-8s}
for pkg in $(go list ./...); do
  dir=$(go list -f '{{.Dir}}' "$pkg")
  for f in $(grep -ho '^func Fuzz[A-Za-z0-9_]*' "$dir"/*_test.go 2>/dev/null | sed 's/func //' | sort -u); do
    echo "fuzz $pkg $f ($t)"
    go test "$pkg" -run '^$' -fuzz "^$f\$" -fuzztime "$t" >/dev/null
  done
done
