# Stagewright build. `make run` serves the page, `make test` runs every test.
GO ?= go

.PHONY: test test-go vet fmt-check run site bench fuzz

test: fmt-check vet test-go test-web

test-go:
	$(GO) test ./core/...

vet:
	$(GO) vet ./core/...

fmt-check:
	@out=$$(gofmt -l core wasm 2>/dev/null); if [ -n "$$out" ]; then echo "gofmt would change: $$out"; exit 1; fi

include web.mk
