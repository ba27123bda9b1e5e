# colbridge — the two set-up commands are `make demo` and `make test`.
GO       ?= go
BIN      := bin/colbridge
DEMO_OUT ?= out/demo
# Test time budget: the whole suite must stay well under 5 minutes on 2 cores.
TEST_TIMEOUT ?= 10m

.PHONY: all setup build test demo bench fuzz vet fmt-check clean

all: build

setup:
	@./scripts/setup.sh

build: setup
	$(GO) build -o $(BIN) ./cmd/colbridge

vet: setup
	$(GO) vet ./...

fmt-check:
	@out=$$(gofmt -l $$(git ls-files '*.go' 2>/dev/null || find . -name '*.go')); \
	if [ -n "$$out" ]; then echo "gofmt would change: $$out"; exit 1; fi

test: setup fmt-check vet
	$(GO) test -timeout $(TEST_TIMEOUT) ./...

demo: build
	./$(BIN) demo --out $(DEMO_OUT)

# Benchmarks with stated sizes (see DEVELOPERS.md); BENCH selects, COUNT repeats for medians.
BENCH ?= .
COUNT ?= 1
bench: setup
	$(GO) test -run '^$$' -bench '$(BENCH)' -benchtime 1x -count $(COUNT) -timeout 60m ./...

# Run every fuzz target for FUZZTIME each.
FUZZTIME ?= 30s
fuzz: setup
	@for pkg in $$($(GO) list ./...); do \
		for f in $$($(GO) test -list 'Fuzz.*' $$pkg 2>/dev/null | grep '^Fuzz'); do \
			echo "fuzz $$pkg $$f"; $(GO) test -run '^$$' -fuzz "^$$f$$" -fuzztime $(FUZZTIME) $$pkg || exit 1; \
		done; \
	done

clean:
	rm -rf bin out
