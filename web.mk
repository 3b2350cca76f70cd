# Web targets: the WebAssembly engine, the page, its server and its tests.
# Included from the top Makefile. `make site` builds site/dist/ (with the
# single file site/dist/stagewright.html), `make run` serves it on loopback,
# `make test-web` runs the bridge tests natively and under Node and the
# browser tests in Debian's Chromium.

NODE ?= node
NPM ?= npm
CHROMIUM ?= /usr/bin/chromium
GOROOT_DIR := $(shell $(GO) env GOROOT)
WASM_EXEC_DIR := $(GOROOT_DIR)/lib/wasm
STAGEWRIGHT_VERSION := $(shell git describe --always --dirty 2>/dev/null || echo dev)
SERVE_ADDR ?= 127.0.0.1:8080

.PHONY: site run test-web test-wasm test-browser chromium-check wasm-engine site-deps bench-web

# npm ci installs exactly the lock file; it runs again when the lock changes.
site/node_modules/.package-lock.json: site/package.json site/package-lock.json
	cd site && $(NPM) ci --no-audit --no-fund
	@touch $@

site-deps: site/node_modules/.package-lock.json

wasm-engine:
	@mkdir -p site/build
	GOOS=js GOARCH=wasm $(GO) build -trimpath -ldflags='-s -w -X main.buildVersion=$(STAGEWRIGHT_VERSION)' -o site/build/stagewright.wasm ./wasm
	cp "$(WASM_EXEC_DIR)/wasm_exec.js" site/build/wasm_exec.js

site: site-deps wasm-engine
	cd site && STAGEWRIGHT_VERSION='$(STAGEWRIGHT_VERSION)' $(NODE) build.mjs

run: site
	@echo "single file: $(CURDIR)/site/dist/stagewright.html"
	$(GO) run ./wasm/cmd/serve -dir site/dist -addr $(SERVE_ADDR)

# The bridge: natively (request handling, error codes) and under Node as
# js/wasm (the glue through globalThis.stagewright).
test-wasm:
	$(GO) vet ./wasm/...
	GOOS=js GOARCH=wasm $(GO) vet ./wasm/...
	$(GO) test ./wasm/...
	GOOS=js GOARCH=wasm $(GO) test -exec="$(WASM_EXEC_DIR)/go_js_wasm_exec" ./wasm/...

chromium-check:
	@test -x "$(CHROMIUM)" || { echo "test-web: FAILED: $(CHROMIUM) not found; the browser tests need Debian's chromium (apt-get install chromium)"; exit 1; }

test-browser: chromium-check site
	cd site && CHROMIUM='$(CHROMIUM)' $(NODE) --test --test-concurrency=1 test/*.test.mjs

test-web: chromium-check test-wasm test-browser

# Page benchmark: cold open to first plot, slider step latency, single-file
# size (writes site/dist/bench.json, which `make bench` puts in its table).
bench-web: chromium-check site
	$(GO) test -run XXX -bench . -benchtime 20x ./wasm/
	cd site && CHROMIUM='$(CHROMIUM)' $(NODE) bench/bench.mjs
