// Command serve serves a built Stagewright site (site/dist) on the loopback
// interface, for `make run`. It is a plain static file server: no
// directory listings, no caching, correct types for .wasm and .mjs.
//
//	go run ./wasm/cmd/serve -dir site/dist -addr 127.0.0.1:8080
package main

import (
	"errors"
	"flag"
	"fmt"
	"mime"
	"net"
	"net/http"
	"os"
	"path/filepath"
	"strings"
	"time"
)

func main() {
	dir := flag.String("dir", "site/dist", "directory to serve")
	addr := flag.String("addr", "127.0.0.1:8080", "listen address (host:port, loopback only; port 0 picks a free one)")
	flag.Parse()
	if err := run(*dir, *addr); err != nil {
		fmt.Fprintln(os.Stderr, "serve:", err)
		os.Exit(1)
	}
}

func run(dir, addr string) error {
	abs, err := filepath.Abs(dir)
	if err != nil {
		return err
	}
	if st, err := os.Stat(abs); err != nil || !st.IsDir() {
		return fmt.Errorf("%s is not a built site directory (run `make site` first)", abs)
	}
	host, _, err := net.SplitHostPort(addr)
	if err != nil {
		return fmt.Errorf("listen address %q: %w", addr, err)
	}
	if ip := net.ParseIP(host); host != "localhost" && (ip == nil || !ip.IsLoopback()) {
		return fmt.Errorf("listen address %q: only loopback addresses are served (127.0.0.1, ::1, localhost)", addr)
	}
	ln, err := net.Listen("tcp", addr)
	if err != nil {
		return err
	}
	fmt.Printf("Stagewright served at http://%s/\n", ln.Addr())
	if single := filepath.Join(abs, "stagewright.html"); fileExists(single) {
		fmt.Printf("single-file page (works offline, open from disk): %s\n", single)
	}
	srv := &http.Server{
		Handler:           Handler(abs),
		ReadHeaderTimeout: 5 * time.Second,
	}
	err = srv.Serve(ln)
	if errors.Is(err, http.ErrServerClosed) {
		return nil
	}
	return err
}

func fileExists(p string) bool {
	st, err := os.Stat(p)
	return err == nil && st.Mode().IsRegular()
}

// Handler serves the files under root. Directory paths serve their
// index.html; listings are never shown.
func Handler(root string) http.Handler {
	_ = mime.AddExtensionType(".wasm", "application/wasm")
	_ = mime.AddExtensionType(".mjs", "text/javascript")
	files := http.FileServer(http.Dir(root))
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if r.Method != http.MethodGet && r.Method != http.MethodHead {
			http.Error(w, "only GET and HEAD are served", http.StatusMethodNotAllowed)
			return
		}
		clean := filepath.Clean("/" + r.URL.Path)
		full := filepath.Join(root, filepath.FromSlash(clean))
		if st, err := os.Stat(full); err == nil && st.IsDir() {
			if !fileExists(filepath.Join(full, "index.html")) {
				http.NotFound(w, r)
				return
			}
		}
		if strings.Contains(r.URL.Path, "..") {
			http.NotFound(w, r)
			return
		}
		w.Header().Set("Cache-Control", "no-cache")
		w.Header().Set("X-Content-Type-Options", "nosniff")
		files.ServeHTTP(w, r)
	})
}
