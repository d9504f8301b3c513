# termgrove — see README.md and DEVELOPERS.md.
GO      ?= go
BIN     := bin/termgrove
VERSION := $(shell git describe --always --dirty 2>/dev/null || echo dev)
LDFLAGS := -X main.version=$(VERSION)

.PHONY: build test demo bench proto lint fuzz eval clean

build:
	$(GO) build -ldflags "$(LDFLAGS)" -o $(BIN) ./cmd/termgrove

test: build
	$(GO) vet ./...
	$(GO) test -count=1 -timeout 12m ./...
	@$(GO) test -count=1 -run 'TestConformance' -v ./concepts/rdf | grep -E '^\s*(conformance|---|ok|FAIL)' | grep -E 'conformance|FAIL' || true

demo: build
	bash scripts/demo.sh

bench: build
	bash scripts/bench.sh

proto:
	bash scripts/proto.sh

lint:
	$(GO) vet ./...
	@test -z "$$(gofmt -l $$(git ls-files '*.go' | grep -v '\.pb\.go$$'))" || (gofmt -l $$(git ls-files '*.go' | grep -v '\.pb\.go$$'); exit 1)

fuzz:
	bash scripts/fuzz.sh 10s

eval: build
	bash scripts/eval.sh

clean:
	rm -rf bin build
