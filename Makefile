# warmrain: make demo (run the main job on the bundled sample), make test (the test suite).
GO ?= go
BIN := bin/warmrain

.PHONY: all deps build demo test faults check bench fuzz clean

all: build

deps:
	@bash .ci/deps.sh

build: deps
	$(GO) build -o $(BIN) ./cmd/warmrain

demo: build
	./$(BIN) demo --dir demo-output

test: deps
	$(GO) test ./...
	@test -z "$$(gofmt -l $$(git ls-files '*.go'))" || { echo "gofmt needed:"; gofmt -l $$(git ls-files '*.go'); exit 1; }
	$(GO) vet ./...

# The fault storms of process (kill -9, signals, full disks), left out of make test.
faults: deps
	$(GO) test -tags faults -run TestFaults -timeout 20m ./cmd/internal/app

bench: build
	bash bench/run.sh

fuzz: deps
	bash .ci/fuzz.sh

clean:
	rm -rf bin demo-output
