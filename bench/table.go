package main

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"sort"
	"strconv"
	"strings"
)

// Budgets (the issue "Speed budgets and hardening").
const (
	budgetEvalNs     = 100e3 // one full native evaluation, ns
	budgetWasmRatio  = 2.5   // js/wasm time over native time
	designPackage    = "./core/design"
	browserBenchJSON = "site/dist/bench.json"
)

// benchLine is one parsed line of `go test -bench -benchmem` output.
type benchLine struct {
	Name     string
	NsPerOp  float64
	AllocsOp float64
	BytesOp  float64
}

// A line reads e.g.
// BenchmarkEvaluate/stage=cs&load=r-2   9043   131877 ns/op   11653 B/op   163 allocs/op
var benchRE = regexp.MustCompile(`^(Benchmark\S+?)(?:-\d+)?\s+\d+\s+([0-9.]+) ns/op(?:\s+([0-9.]+) B/op)?(?:\s+([0-9.]+) allocs/op)?`)

func parseBench(out []byte) []benchLine {
	var lines []benchLine
	sc := bufio.NewScanner(bytes.NewReader(out))
	for sc.Scan() {
		m := benchRE.FindStringSubmatch(strings.TrimSpace(sc.Text()))
		if m == nil {
			continue
		}
		l := benchLine{Name: m[1]}
		l.NsPerOp, _ = strconv.ParseFloat(m[2], 64)
		if m[3] != "" {
			l.BytesOp, _ = strconv.ParseFloat(m[3], 64)
		}
		if m[4] != "" {
			l.AllocsOp, _ = strconv.ParseFloat(m[4], 64)
		}
		lines = append(lines, l)
	}
	return lines
}

// runBench runs the benchmarks matching pattern in the design package,
// with extra environment and go test flags, from the module root.
func runBench(root, pattern string, env []string, extra ...string) ([]benchLine, error) {
	args := append([]string{"test", "-run", "XXX", "-bench", pattern, "-benchmem"}, extra...)
	args = append(args, designPackage)
	cmd := exec.Command("go", args...)
	cmd.Dir = root
	cmd.Env = append(os.Environ(), env...)
	out, err := cmd.CombinedOutput()
	what := "go " + strings.Join(args, " ")
	if len(env) > 0 {
		what = strings.Join(env, " ") + " " + what
	}
	if err != nil {
		return nil, fmt.Errorf("%s failed: %v\n%s", what, err, tail(out, 20))
	}
	lines := parseBench(out)
	if len(lines) == 0 {
		return nil, fmt.Errorf("%s printed no benchmark results:\n%s", what, tail(out, 20))
	}
	return lines, nil
}

func tail(out []byte, n int) string {
	ls := strings.Split(strings.TrimRight(string(out), "\n"), "\n")
	if len(ls) > n {
		ls = ls[len(ls)-n:]
	}
	return strings.Join(ls, "\n")
}

// evalLines keeps the per-design lines of BenchmarkEvaluate.
func evalLines(ls []benchLine) []benchLine {
	var out []benchLine
	for _, l := range ls {
		if strings.HasPrefix(l.Name, "BenchmarkEvaluate/") {
			out = append(out, l)
		}
	}
	return out
}

func median(xs []float64) float64 {
	if len(xs) == 0 {
		return 0
	}
	s := append([]float64(nil), xs...)
	sort.Float64s(s)
	if len(s)%2 == 1 {
		return s[len(s)/2]
	}
	return (s[len(s)/2-1] + s[len(s)/2]) / 2
}

func moduleRoot() (string, error) {
	out, err := exec.Command("go", "env", "GOMOD").Output()
	if err != nil {
		return "", fmt.Errorf("go env GOMOD: %v", err)
	}
	mod := strings.TrimSpace(string(out))
	if mod == "" || mod == os.DevNull {
		return "", errors.New("not inside the stagewright module: run go run ./bench from the repository")
	}
	return filepath.Dir(mod), nil
}

type row struct{ figure, budget, measured, within string }

func verdict(ok bool) string {
	if ok {
		return "yes"
	}
	return "**no**"
}

func main() {
	failed := false
	complain := func(err error) {
		fmt.Fprintln(os.Stderr, "bench:", err)
		failed = true
	}
	root, err := moduleRoot()
	if err != nil {
		complain(err)
		os.Exit(1)
	}
	var rows []row

	// Native.
	native, err := runBench(root, "^BenchmarkEvaluate(Points)?$", nil)
	if err != nil {
		complain(err)
	}
	var nativeNs []float64
	for _, l := range evalLines(native) {
		nativeNs = append(nativeNs, l.NsPerOp)
	}
	nativeMed := median(nativeNs)
	if len(nativeNs) > 0 {
		rows = append(rows, row{
			fmt.Sprintf("native full evaluation, median over %d designs", len(nativeNs)),
			fmt.Sprintf("%.0f µs", budgetEvalNs/1e3), fmt.Sprintf("%.1f µs", nativeMed/1e3), verdict(nativeMed <= budgetEvalNs),
		})
		var allocs []float64
		for _, l := range evalLines(native) {
			allocs = append(allocs, l.AllocsOp)
		}
		rows = append(rows, row{"allocations per evaluation (median)", "informational", fmt.Sprintf("%.0f", median(allocs)), "—"})
	} else {
		rows = append(rows, row{"native full evaluation", fmt.Sprintf("%.0f µs", budgetEvalNs/1e3), "not measured", "—"})
	}
	var pts []benchLine
	for _, l := range native {
		if strings.HasPrefix(l.Name, "BenchmarkEvaluatePoints/") {
			pts = append(pts, l)
		}
	}
	if len(pts) >= 2 {
		var desc []string
		same := true
		for _, p := range pts {
			desc = append(desc, fmt.Sprintf("%s: %.0f", strings.TrimPrefix(p.Name, "BenchmarkEvaluatePoints/"), p.AllocsOp))
			same = same && p.AllocsOp == pts[0].AllocsOp
		}
		rows = append(rows, row{"allocations per sweep point (allocs independent of points)", "0", strings.Join(desc, ", "), verdict(same)})
	} else {
		rows = append(rows, row{"allocations per sweep point", "0", "not measured", "—"})
	}

	// js/wasm under Node.
	goroot, err := exec.Command("go", "env", "GOROOT").Output()
	wasmExec := filepath.Join(strings.TrimSpace(string(goroot)), "lib", "wasm", "go_js_wasm_exec")
	switch {
	case err != nil:
		complain(fmt.Errorf("go env GOROOT: %v", err))
	case fileMissing(wasmExec):
		complain(fmt.Errorf("%s not found: cannot run the js/wasm benchmark", wasmExec))
	default:
		if _, err := exec.LookPath("node"); err != nil {
			complain(errors.New("node not found on PATH: the js/wasm benchmark runs under Node"))
			break
		}
		wasm, err := runBench(root, "BenchmarkEvaluate$", []string{"GOOS=js", "GOARCH=wasm"}, "-exec", wasmExec)
		if err != nil {
			complain(err)
			break
		}
		var ws []float64
		for _, l := range evalLines(wasm) {
			ws = append(ws, l.NsPerOp)
		}
		if len(ws) > 0 && nativeMed > 0 {
			ratio := median(ws) / nativeMed
			rows = append(rows, row{
				"js/wasm over native, median evaluation time",
				fmt.Sprintf("%.1f×", budgetWasmRatio),
				fmt.Sprintf("%.2f× (%.1f µs)", ratio, median(ws)/1e3),
				verdict(ratio <= budgetWasmRatio),
			})
		}
	}
	if !hasPrefix(rows, "js/wasm") {
		rows = append(rows, row{"js/wasm over native", fmt.Sprintf("%.1f×", budgetWasmRatio), "not measured", "—"})
	}

	// The browser benchmark's figures.
	rows = append(rows, browserRows(filepath.Join(root, browserBenchJSON))...)

	fmt.Println("| figure | budget | measured | within budget? |")
	fmt.Println("|---|---|---|---|")
	for _, r := range rows {
		fmt.Printf("| %s | %s | %s | %s |\n", r.figure, r.budget, r.measured, r.within)
	}
	if failed {
		os.Exit(1)
	}
}

func hasPrefix(rows []row, p string) bool {
	for _, r := range rows {
		if strings.HasPrefix(r.figure, p) {
			return true
		}
	}
	return false
}

func fileMissing(p string) bool {
	_, err := os.Stat(p)
	return err != nil
}

// browserRows reads the figures the browser benchmark writes: each key a
// number, and optionally key+"_budget" with its budget in the same unit. A
// missing file or key reads "not measured".
func browserRows(path string) []row {
	// The budgets of the issue; a key+"_budget" in the file overrides one.
	figures := []struct {
		key, figure, unit string
		budget            float64
	}{
		{"slider_p95_ms", "slider move to redrawn plot, 95th percentile", "ms", 8},
		{"open_to_plot_ms", "page open to first plot", "ms", 500},
		{"single_file_bytes", "single-file page size", "bytes", 1.6e6},
	}
	values := map[string]float64{}
	note := "not measured"
	if b, err := os.ReadFile(path); err == nil {
		var raw map[string]json.RawMessage
		if err := json.Unmarshal(b, &raw); err != nil {
			note = "not measured (" + filepath.Base(path) + " unreadable: " + err.Error() + ")"
		}
		for k, v := range raw {
			var x float64
			if json.Unmarshal(v, &x) == nil {
				values[k] = x
			}
		}
	}
	num := func(v float64, unit string) string { return strconv.FormatFloat(v, 'g', 4, 64) + " " + unit }
	var rows []row
	for _, f := range figures {
		r := row{f.figure + " (" + f.key + ")", num(f.budget, f.unit), note, "—"}
		b := f.budget
		if x, has := values[f.key+"_budget"]; has {
			b = x
			r.budget = num(b, f.unit)
		}
		if v, ok := values[f.key]; ok {
			r.measured = num(v, f.unit)
			r.within = verdict(v <= b)
		}
		rows = append(rows, r)
	}
	return rows
}
