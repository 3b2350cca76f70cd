# Stagewright build. `make run` serves the page, `make test` runs every test.
GO ?= go

.PHONY: test test-go vet fmt-check mod-check run site bench fuzz random-full mutants

test: fmt-check mod-check vet test-go test-web

# go.mod and go.sum as go mod tidy leaves them (a direct dependency marked
# indirect, or a stale sum, fails the build here rather than in a later tidy).
mod-check:
	@$(GO) mod tidy -diff || { echo "go.mod or go.sum is untidy: run go mod tidy"; exit 1; }

test-go:
	$(GO) test ./core/... ./bench

vet:
	$(GO) vet ./core/... ./bench ./tools/...

fmt-check:
	@out=$$(gofmt -l core wasm bench tools 2>/dev/null); if [ -n "$$out" ]; then echo "gofmt would change: $$out"; exit 1; fi

# Benchmarks: native and js/wasm engine, and the browser figures when the
# browser benchmark has written site/dist/bench.json; one table with budgets.
bench: bench-web
	$(GO) run ./bench

# Each fuzz target for FUZZTIME (go test -fuzz takes one target at a time).
FUZZTIME ?= 30s
FUZZ_TARGETS = ./core/units:FuzzParse ./core/units:FuzzExact ./core/device:FuzzCurrent ./core/design:FuzzDecode ./core/design:FuzzEvaluate

fuzz:
	@set -e; for t in $(FUZZ_TARGETS); do \
		echo "fuzz $${t#*:} in $${t%%:*} for $(FUZZTIME)"; \
		$(GO) test -run '^$$' -fuzz "^$${t#*:}$$" -fuzztime $(FUZZTIME) $${t%%:*}; \
	done

# Deliberate faults, one at a time in a copy of the module (tools/mutants):
# fails when any fault survives the tests of its packages. About a minute.
mutants:
	$(GO) run ./tools/mutants

# The full random-design runs: 100,000 designs (make test runs 10,000), and
# 1,000,000 stages biased by their input level (make test runs 20,000).
random-full:
	STAGEWRIGHT_RANDOM_VIN=1000000 $(GO) test -count=1 -timeout 30m -run '^TestRandomInputLevelStages$$' -v ./core/stage
	STAGEWRIGHT_RANDOM_FULL=1 $(GO) test -count=1 -timeout 30m -run '^TestRandomDesignsFull$$' -v ./core/design

include web.mk
