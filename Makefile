# warmrain: make demo (run the main job on the bundled sample), make test (the test suite),
# make check (test plus static checks, race detector and a short fuzz run).
GO ?= go
BIN := bin/warmrain

.PHONY: all deps build demo test faults check lint race bench fuzz clean

all: build

deps:
	@bash .ci/deps.sh

build: deps
	$(GO) build -o $(BIN) ./cmd/warmrain

demo: build
	./$(BIN) demo --dir demo-output

test: deps
	$(GO) test -timeout 25m ./...
	@test -z "$$(gofmt -l $$(git ls-files '*.go'))" || { echo "gofmt needed:"; gofmt -l $$(git ls-files '*.go'); exit 1; }
	$(GO) vet ./...

# lint: go.mod tidy, go vet, pinned staticcheck (staticcheck.conf).
lint: deps
	GO=$(GO) bash .ci/lint.sh

# race: the race detector on grid and cmd/internal/batch (.ci/race.sh).
race: deps
	GO=$(GO) bash .ci/race.sh

check: test lint race fuzz

# The fault storms of process (kill -9, signals, full disks), left out of make test.
faults: deps
	$(GO) test -tags faults -run TestFaults -timeout 20m ./cmd/internal/app

bench: build
	bash bench/run.sh

fuzz: deps
	bash .ci/fuzz.sh

clean:
	rm -rf bin demo-output
