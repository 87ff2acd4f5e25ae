# warmrain: make demo (run the main job on the bundled sample), make test (the fast tier:
# every test except the slow ones, gofmt and vet; under 30 s), make check (the full tier:
# every test, static checks, race detector, fault storms, a short fuzz run and, as root,
# the Slurm end-to-end test). .ci/run runs both.
GO ?= go
BIN := bin/warmrain

.PHONY: all deps build demo test test-full faults check lint race bench fuzz slurm clean

all: build

deps:
	@bash .ci/deps.sh

build: deps
	$(GO) build -o $(BIN) ./cmd/warmrain

demo: build
	./$(BIN) demo --dir demo-output

# test: the fast tier. Slow tests (integration sweeps, end-to-end runs over many files,
# outside readers) check testing.Short() and run only in test-full.
test: deps
	$(GO) test -short ./...
	@test -z "$$(gofmt -l $$(git ls-files '*.go'))" || { echo "gofmt needed:"; gofmt -l $$(git ls-files '*.go'); exit 1; }
	$(GO) vet ./...

# test-full: every test, the slow ones too.
test-full: deps
	$(GO) test -timeout 25m ./...

# lint: go.mod tidy, go vet, pinned staticcheck (staticcheck.conf).
lint: deps
	GO=$(GO) bash .ci/lint.sh

# race: the race detector on the packages with concurrency (.ci/race.sh).
race: deps
	GO=$(GO) bash .ci/race.sh

check: test-full lint race faults fuzz slurm

# The fault storms of process (kill -9, signals, full disks), left out of make test.
faults: deps
	$(GO) test -tags faults -run TestFaults -timeout 20m ./cmd/internal/app

bench: build
	bash bench/run.sh

fuzz: deps
	bash .ci/fuzz.sh

# slurm: a job array on a one-node Slurm cluster on loopback (root; installs Slurm).
slurm: deps
	bash .ci/slurm-e2e.sh

clean:
	rm -rf bin demo-output
