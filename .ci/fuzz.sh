#!/usr/bin/env bash
# A short run of every fuzz target (the seed corpora run in make test anyway).
# A failure prints go test's output. A run that fails without leaving a new failing
# input in testdata/fuzz (the fuzzing engine itself stopping, e.g. a worker that did
# not answer on a loaded machine) is run once more; a found failure is never retried.
set -euo pipefail
cd "$(dirname "$0")/.."
t=${FUZZTIME:-8s}
status=0
for pkg in $(go list ./...); do
  dir=$(go list -f '{{.Dir}}' "$pkg")
  for f in $(grep -ho '^func Fuzz[A-Za-z0-9_]*' "$dir"/*_test.go 2>/dev/null | sed 's/func //' | sort -u); do
    echo "fuzz $pkg $f ($t)"
    for attempt in 1 2; do
      before=$(ls "$dir/testdata/fuzz/$f" 2>/dev/null | wc -l)
      if out=$(go test "$pkg" -run '^$' -fuzz "^$f\$" -fuzztime "$t" 2>&1); then
        break
      fi
      after=$(ls "$dir/testdata/fuzz/$f" 2>/dev/null | wc -l)
      echo "$out" | tail -40
      if [ "$after" != "$before" ] || [ "$attempt" = 2 ]; then
        echo "FAIL: $pkg $f (new failing input in $dir/testdata/fuzz/$f: $((after - before)))"
        status=1
        break
      fi
      echo "fuzz $pkg $f: the engine stopped without a failing input; running it once more"
    done
  done
done
exit $status
