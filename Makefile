# warmrain: make demo (run the main job on the bundled sample), make test (the test suite).
GO ?= go
BIN := bin/warmrain

.PHONY: all deps build demo test check bench fuzz clean

all: build

deps:
	@bash .ci/deps.sh

build: deps
	$(GO) build -o $(BIN) ./cmd/warmrain

demo: build
	./$(BIN) demo --dir demo-output

test: deps
	$(GO) test -timeout 30m ./...
	@test -z "$$(gofmt -l $$(git ls-files '*.go'))" || { echo "gofmt needed:"; gofmt -l $$(git ls-files '*.go'); exit 1; }
	$(GO) vet ./...

bench: build
	bash bench/run.sh

fuzz: deps
	bash .ci/fuzz.sh

clean:
	rm -rf bin demo-output
