// Command mutants checks that the tests catch wrong numbers. Each entry of
// the list in faults.go is one deliberate fault: a file, an exact snippet of
// it, the faulty text that replaces the snippet, and the packages whose tests
// must catch it. The module is copied once to a temporary directory; for
// each fault the snippet is replaced there, `go test -short` runs on the
// named packages, and the file is put back. A fault survives when every test
// still passes; a snippet that no longer occurs exactly once in its file is
// an error too, so a change to the code must update the list.
//
// It prints the table of faults and the tests that caught each, and exits
// with status 1 when any fault survived or any snippet is stale.
//
//	go run ./tools/mutants            # every fault
//	go run ./tools/mutants -run gmb   # the faults whose name contains "gmb"
//	go run ./tools/mutants -list      # the table of faults, nothing run
package main

import (
	"bufio"
	"bytes"
	"errors"
	"flag"
	"fmt"
	"io"
	"io/fs"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"sort"
	"strings"
	"time"
)

// fault is one deliberate bug.
type fault struct {
	Name string   // what is wrong, in words
	File string   // path from the module root
	From string   // exact text in File, occurring once
	To   string   // the faulty text
	Pkgs []string // packages whose tests must catch it (./core/…)
}

// copied are the parts of the module the tests need.
var copied = []string{"go.mod", "go.sum", "README.md", "DEVELOPERS.md", "core", "wasm", "bench", "testdata"}

func main() {
	run := flag.String("run", "", "only the faults whose name contains this text")
	list := flag.Bool("list", false, "print the faults and exit")
	keep := flag.Bool("keep", false, "keep the temporary copy (its path is printed)")
	flag.Parse()
	if *list {
		for i, f := range faults {
			fmt.Printf("%2d  %-60s %s  %v\n", i+1, f.Name, f.File, f.Pkgs)
		}
		return
	}
	if err := mainErr(*run, *keep); err != nil {
		fmt.Fprintln(os.Stderr, "mutants:", err)
		os.Exit(1)
	}
}

type outcome struct {
	f       fault
	caught  []string // failing tests
	err     string   // a stale snippet or a fault that does not build
	seconds float64
}

func mainErr(filter string, keep bool) error {
	root, err := moduleRoot()
	if err != nil {
		return err
	}
	tmp, err := os.MkdirTemp("", "stagewright-mutants-")
	if err != nil {
		return err
	}
	if keep {
		fmt.Println("copy in", tmp)
	} else {
		defer os.RemoveAll(tmp)
	}
	for _, p := range copied {
		if err := copyTree(filepath.Join(root, p), filepath.Join(tmp, p)); err != nil {
			return fmt.Errorf("copying %s: %w", p, err)
		}
	}
	start := time.Now()
	var results []outcome
	for _, f := range faults {
		if filter != "" && !strings.Contains(f.Name, filter) {
			continue
		}
		o := try(tmp, f)
		results = append(results, o)
		status := "caught by " + strings.Join(o.caught, ", ")
		switch {
		case o.err != "":
			status = "ERROR: " + o.err
		case len(o.caught) == 0:
			status = "SURVIVED"
		}
		fmt.Printf("%-58s %5.1fs  %s\n", f.Name, o.seconds, status)
	}
	fmt.Printf("\n| # | fault | file | caught by |\n|---|---|---|---|\n")
	bad := 0
	for i, o := range results {
		c := strings.Join(o.caught, ", ")
		switch {
		case o.err != "":
			c, bad = "**error: "+strings.ReplaceAll(o.err, "\n", " / ")+"**", bad+1
		case c == "":
			c, bad = "**survived**", bad+1
		}
		fmt.Printf("| %d | %s | `%s` | %s |\n", i+1, o.f.Name, o.f.File, c)
	}
	fmt.Printf("\n%d faults in %.0f s: %d caught, %d survived or stale\n", len(results), time.Since(start).Seconds(), len(results)-bad, bad)
	if bad > 0 {
		return fmt.Errorf("%d of %d faults not caught", bad, len(results))
	}
	return nil
}

var failLine = regexp.MustCompile(`^\s*--- FAIL: (\S+)`)

// try applies f in the copy at tmp, runs the tests and restores the file.
func try(tmp string, f fault) (o outcome) {
	o.f = f
	t0 := time.Now()
	defer func() { o.seconds = time.Since(t0).Seconds() }()
	path := filepath.Join(tmp, f.File)
	orig, err := os.ReadFile(path)
	if err != nil {
		o.err = err.Error()
		return o
	}
	if n := bytes.Count(orig, []byte(f.From)); n != 1 {
		o.err = fmt.Sprintf("the snippet occurs %d times in %s (the code changed: update the fault)", n, f.File)
		return o
	}
	mutated := bytes.Replace(orig, []byte(f.From), []byte(f.To), 1)
	if err := os.WriteFile(path, mutated, 0o644); err != nil {
		o.err = err.Error()
		return o
	}
	defer os.WriteFile(path, orig, 0o644)

	args := append([]string{"test", "-short", "-count=1", "-timeout", "5m"}, f.Pkgs...)
	cmd := exec.Command("go", args...)
	cmd.Dir = tmp
	out, _ := cmd.CombinedOutput()
	seen := map[string]bool{}
	sc := bufio.NewScanner(bytes.NewReader(out))
	sc.Buffer(make([]byte, 1<<20), 1<<24)
	buildFailed := false
	for sc.Scan() {
		line := sc.Text()
		if m := failLine.FindStringSubmatch(line); m != nil {
			name := m[1]
			if i := strings.IndexByte(name, '/'); i > 0 {
				name = name[:i]
			}
			if !seen[name] {
				seen[name] = true
				o.caught = append(o.caught, name)
			}
		}
		if strings.Contains(line, "[build failed]") || strings.Contains(line, "[setup failed]") {
			buildFailed = true
		}
	}
	sort.Strings(o.caught)
	if buildFailed && len(o.caught) == 0 {
		o.err = "the fault does not build:\n" + tail(string(out), 6)
	}
	return o
}

func tail(s string, n int) string {
	lines := strings.Split(strings.TrimSpace(s), "\n")
	if len(lines) > n {
		lines = lines[len(lines)-n:]
	}
	return strings.Join(lines, "\n")
}

// moduleRoot is the directory of go.mod above the working directory.
func moduleRoot() (string, error) {
	dir, err := os.Getwd()
	if err != nil {
		return "", err
	}
	for {
		if _, err := os.Stat(filepath.Join(dir, "go.mod")); err == nil {
			return dir, nil
		}
		parent := filepath.Dir(dir)
		if parent == dir {
			return "", errors.New("no go.mod above the working directory")
		}
		dir = parent
	}
}

// copyTree copies a file or directory, skipping what the Go tests never
// read (node_modules, build outputs, WebAssembly binaries).
func copyTree(src, dst string) error {
	return filepath.WalkDir(src, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(src, p)
		target := filepath.Join(dst, rel)
		if d.IsDir() {
			switch d.Name() {
			case "node_modules", "dist", ".git":
				return filepath.SkipDir
			}
			return os.MkdirAll(target, 0o755)
		}
		if strings.HasSuffix(p, ".wasm") || !d.Type().IsRegular() {
			return nil
		}
		in, err := os.Open(p)
		if err != nil {
			return err
		}
		defer in.Close()
		out, err := os.Create(target)
		if err != nil {
			return err
		}
		if _, err := io.Copy(out, in); err != nil {
			out.Close()
			return err
		}
		return out.Close()
	})
}
