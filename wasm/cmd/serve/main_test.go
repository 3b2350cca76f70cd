package main

import (
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"testing"
)

func TestHandler(t *testing.T) {
	root := t.TempDir()
	if err := os.WriteFile(filepath.Join(root, "index.html"), []byte("<!doctype html>"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(root, "stagewright.wasm"), []byte("\x00asm"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.Mkdir(filepath.Join(root, "empty"), 0o755); err != nil {
		t.Fatal(err)
	}
	h := Handler(root)
	tests := []struct {
		method, path string
		status       int
		contentType  string // checked when not empty (MIME types from common practice: application/wasm is what WebAssembly.instantiateStreaming requires)
	}{
		{"GET", "/", 200, "text/html; charset=utf-8"},
		{"GET", "/stagewright.wasm", 200, "application/wasm"},
		{"GET", "/empty/", 404, ""},
		{"GET", "/missing.js", 404, ""},
		{"GET", "/../etc/passwd", 404, ""},
		{"POST", "/", 405, ""},
	}
	for _, tc := range tests {
		rec := httptest.NewRecorder()
		h.ServeHTTP(rec, httptest.NewRequest(tc.method, tc.path, nil))
		if rec.Code != tc.status {
			t.Errorf("%s %s: status %d, want %d", tc.method, tc.path, rec.Code, tc.status)
		}
		if tc.contentType != "" && rec.Header().Get("Content-Type") != tc.contentType {
			t.Errorf("%s %s: Content-Type %q, want %q", tc.method, tc.path, rec.Header().Get("Content-Type"), tc.contentType)
		}
	}
}

func TestRunRefusesNonLoopback(t *testing.T) {
	dir := t.TempDir()
	for _, addr := range []string{"0.0.0.0:0", "example.invalid:0", "nonsense"} {
		if err := run(dir, addr); err == nil {
			t.Errorf("run(%q) served; want a refusal", addr)
		}
	}
	_ = http.StatusOK
}
