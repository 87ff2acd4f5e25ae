#!/usr/bin/env bash
# .ci/lint.sh: static checks, run by .ci/run and `make check`: go.mod and go.sum tidy,
# go vet, and staticcheck at a pinned version (configuration and its exclusions in
# staticcheck.conf at the module root).
set -euo pipefail
cd "$(dirname "$0")/.."
GO="${GO:-go}"
# Pinned staticcheck: v0.8.2 (release 2026.2.2) is the newest on the Go module proxy and
# supports Go 1.26. Bump it together with the Go version.
STATICCHECK_VERSION=0.8.2

echo "== go mod tidy check"
if ! "$GO" mod tidy -diff; then
  echo "go.mod/go.sum are not tidy: run 'go mod tidy' and commit the result" >&2
  exit 1
fi

echo "== go vet"
"$GO" vet ./...

echo "== staticcheck v$STATICCHECK_VERSION"
sc="$("$GO" env GOPATH)/bin/staticcheck"
if ! { [ -x "$sc" ] && "$sc" -version 2>/dev/null | grep -q "($STATICCHECK_VERSION)"; }; then
  "$GO" install "honnef.co/go/tools/cmd/staticcheck@v$STATICCHECK_VERSION"
fi
"$sc" ./...
