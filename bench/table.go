package main

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"math"
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

// testBinary compiles the design package's tests into dir, natively or
// for js/wasm, and returns the binary's path. Compiling once lets the
// rounds below alternate the two runs without rebuilding.
func testBinary(root, dir string, wasm bool) (string, error) {
	out := filepath.Join(dir, "design.test")
	var env []string
	if wasm {
		out = filepath.Join(dir, "design.wasm")
		env = []string{"GOOS=js", "GOARCH=wasm"}
	}
	cmd := exec.Command("go", "test", "-c", "-o", out, designPackage)
	cmd.Dir = root
	cmd.Env = append(os.Environ(), env...)
	if b, err := cmd.CombinedOutput(); err != nil {
		return "", fmt.Errorf("%s go test -c %s failed: %v\n%s", strings.Join(env, " "), designPackage, err, tail(b, 20))
	}
	return out, nil
}

// runBench runs the benchmarks matching pattern in a compiled test binary
// (through wasmExec when it is set), from the design package's directory.
func runBench(root, binary, wasmExec, pattern string, extra ...string) ([]benchLine, error) {
	args := append([]string{"-test.run", "XXX", "-test.bench", pattern, "-test.benchmem"}, extra...)
	name := binary
	if wasmExec != "" {
		name, args = wasmExec, append([]string{binary}, args...)
	}
	cmd := exec.Command(name, args...)
	cmd.Dir = filepath.Join(root, designPackage)
	out, err := cmd.CombinedOutput()
	what := name + " " + strings.Join(args, " ")
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

// Flags. The defaults give a ratio that repeats within a few per cent on
// a quiet machine; on a shared one, more rounds narrow the spread.
var (
	rounds     = flag.Int("rounds", 5, "alternating native and js/wasm runs of BenchmarkEvaluate")
	nativeTime = flag.String("nativetime", "1s", "benchtime of each design per native round")
	wasmTime   = flag.String("wasmtime", "2s", "benchtime of each design per js/wasm round (V8's optimised tier needs about a second to take over)")
)

// spread describes a sample as "median (min … max, n = N)".
func spread(xs []float64, format string) string {
	if len(xs) == 0 {
		return "—"
	}
	s := append([]float64(nil), xs...)
	sort.Float64s(s)
	return fmt.Sprintf(format+" ("+format+" … "+format+", %d rounds)", median(s), s[0], s[len(s)-1], len(s))
}

func main() {
	flag.Parse()
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
	tmp, err := os.MkdirTemp("", "stagewright-bench-")
	if err != nil {
		complain(err)
		os.Exit(1)
	}
	defer os.RemoveAll(tmp)
	var rows []row

	nativeBin, err := testBinary(root, tmp, false)
	if err != nil {
		complain(err)
	}
	// Allocations, once: they do not depend on the machine's load.
	var native []benchLine
	if nativeBin != "" {
		native, err = runBench(root, nativeBin, "", "^BenchmarkEvaluate(Points)?$", "-test.benchtime", "0.2s")
		if err != nil {
			complain(err)
		}
	}
	if ev := evalLines(native); len(ev) > 0 {
		var allocs []float64
		for _, l := range ev {
			allocs = append(allocs, l.AllocsOp)
		}
		rows = append(rows, row{"allocations per evaluation (median)", "informational", fmt.Sprintf("%.0f", median(allocs)), "—"})
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
	var wasmBin, wasmExec string
	goroot, err := exec.Command("go", "env", "GOROOT").Output()
	wasmExec = filepath.Join(strings.TrimSpace(string(goroot)), "lib", "wasm", "go_js_wasm_exec")
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
		if wasmBin, err = testBinary(root, tmp, true); err != nil {
			complain(err)
		}
	}

	// Rounds: native, then js/wasm, alternating, so that both see the same
	// load on a shared machine. A round's ratio is the median evaluation
	// time over the designs under js/wasm over the same median natively; the
	// table gives the median over rounds with the lowest and highest round.
	var nativeMeds, wasmMeds, ratios []float64
	perDesign := map[string][2][]float64{}
	var names []string
	for r := 0; r < *rounds && nativeBin != ""; r++ {
		nl, err := runBench(root, nativeBin, "", "^BenchmarkEvaluate$", "-test.benchtime", *nativeTime)
		if err != nil {
			complain(err)
			break
		}
		var ns []float64
		for _, l := range evalLines(nl) {
			ns = append(ns, l.NsPerOp)
			d := perDesign[l.Name]
			if d[0] == nil {
				names = append(names, l.Name)
			}
			d[0] = append(d[0], l.NsPerOp)
			perDesign[l.Name] = d
		}
		nativeMeds = append(nativeMeds, median(ns))
		fmt.Fprintf(os.Stderr, "bench: round %d/%d: native median %.1f µs", r+1, *rounds, median(ns)/1e3)
		if wasmBin == "" {
			fmt.Fprintln(os.Stderr)
			continue
		}
		wl, err := runBench(root, wasmBin, wasmExec, "^BenchmarkEvaluate$", "-test.benchtime", *wasmTime)
		if err != nil {
			fmt.Fprintln(os.Stderr)
			complain(err)
			wasmBin = ""
			continue
		}
		var ws []float64
		for _, l := range evalLines(wl) {
			ws = append(ws, l.NsPerOp)
			d := perDesign[l.Name]
			d[1] = append(d[1], l.NsPerOp)
			perDesign[l.Name] = d
		}
		wasmMeds = append(wasmMeds, median(ws))
		ratios = append(ratios, median(ws)/median(ns))
		fmt.Fprintf(os.Stderr, ", js/wasm %.1f µs, ratio %.2f\n", median(ws)/1e3, median(ws)/median(ns))
	}
	if len(nativeMeds) > 0 {
		nativeMed := median(nativeMeds)
		rows = append(rows, row{
			fmt.Sprintf("native full evaluation, median over %d designs", len(evalLines(native))),
			fmt.Sprintf("%.0f µs", budgetEvalNs/1e3), spread(scale(nativeMeds, 1e-3), "%.1f µs"), verdict(nativeMed <= budgetEvalNs),
		})
	} else {
		rows = append(rows, row{"native full evaluation", fmt.Sprintf("%.0f µs", budgetEvalNs/1e3), "not measured", "—"})
	}
	if len(ratios) > 0 {
		// Interference from other work only ever slows a run down, so each
		// design's fastest round is its least disturbed time; the verdict
		// uses the ratio of those, and the rounds show the noise.
		var bestN, bestW []float64
		for _, n := range names {
			d := perDesign[n]
			if len(d[1]) > 0 {
				bestN, bestW = append(bestN, minimum(d[0])), append(bestW, minimum(d[1]))
			}
		}
		best := median(bestW) / median(bestN)
		rows = append(rows, row{"js/wasm full evaluation, median over the designs", "informational", spread(scale(wasmMeds, 1e-3), "%.1f µs"), "—"})
		rows = append(rows, row{
			"js/wasm over native, median evaluation time (each design's fastest round)",
			fmt.Sprintf("%.1f×", budgetWasmRatio),
			fmt.Sprintf("%.2f× (%.1f µs / %.1f µs)", best, median(bestW)/1e3, median(bestN)/1e3),
			verdict(best <= budgetWasmRatio),
		})
		rows = append(rows, row{"js/wasm over native, round by round", "informational", spread(ratios, "%.2f×"), "—"})
	} else {
		rows = append(rows, row{"js/wasm over native", fmt.Sprintf("%.1f×", budgetWasmRatio), "not measured", "—"})
	}

	// Monte Carlo natively: 10,000 samples of the default design.
	rows = append(rows, monteCarloRow(root), fitRow(root), fittedRow(root))

	// The browser benchmark's figures.
	rows = append(rows, browserRows(filepath.Join(root, browserBenchJSON))...)

	fmt.Println("| figure | budget | measured | within budget? |")
	fmt.Println("|---|---|---|---|")
	for _, r := range rows {
		fmt.Printf("| %s | %s | %s | %s |\n", r.figure, r.budget, r.measured, r.within)
	}
	if len(names) > 0 {
		fmt.Println()
		fmt.Println("| design | native µs | js/wasm µs | ratio |")
		fmt.Println("|---|---|---|---|")
		for _, n := range names {
			d := perDesign[n]
			nat, ratio := median(d[0]), "—"
			w := "—"
			if len(d[1]) > 0 {
				w = fmt.Sprintf("%.1f", median(d[1])/1e3)
				ratio = fmt.Sprintf("%.2f×", median(d[1])/nat)
			}
			fmt.Printf("| %s | %.1f | %s | %s |\n", strings.TrimPrefix(n, "BenchmarkEvaluate/"), nat/1e3, w, ratio)
		}
	}
	if failed {
		os.Exit(1)
	}
}

// monteCarloRow runs BenchmarkMonteCarlo/10000 in core/variation natively
// (five runs; the median's ns/op is the time of one 10,000-sample run).
func monteCarloRow(root string) row {
	const budgetMs = 300
	r := row{"native Monte Carlo, 10,000 samples (op + midband + f3db each)", fmt.Sprintf("%d ms", budgetMs), "not measured", "—"}
	cmd := exec.Command("go", "test", "-run", "XXX", "-bench", "BenchmarkMonteCarlo/10000$", "-benchtime", "5x", "-count", "3", "./core/variation")
	cmd.Dir = root
	out, err := cmd.CombinedOutput()
	if err != nil {
		r.measured = "not measured (" + strings.TrimSpace(tail(out, 1)) + ")"
		return r
	}
	var ms []float64
	for _, l := range parseBench(out) {
		ms = append(ms, l.NsPerOp/1e6)
	}
	if len(ms) == 0 {
		return r
	}
	r.measured = spread(ms, "%.0f ms")
	r.within = verdict(median(ms) <= budgetMs)
	return r
}

// fitRow runs BenchmarkFit10k in core/extract natively: one whole fit of
// 10,224 points (three runs; the median).
func fitRow(root string) row {
	const budgetMs = 2000
	r := row{"native fit of 10,224 characterization points", fmt.Sprintf("%d ms", budgetMs), "not measured", "—"}
	out, err := goBench(root, "./core/extract", "BenchmarkFit10k$", "2x")
	if err != nil {
		r.measured = "not measured (" + err.Error() + ")"
		return r
	}
	var ms []float64
	for _, l := range parseBench(out) {
		ms = append(ms, l.NsPerOp/1e6)
	}
	if len(ms) > 0 {
		r.measured, r.within = spread(ms, "%.0f ms"), verdict(median(ms) <= budgetMs)
	}
	return r
}

// fittedRow compares one evaluation on a fitted process with length bins
// against the same design on a demo process (BenchmarkEvaluateFitted):
// the budget is "as fast", read as within 10 %, the run-to-run noise here.
func fittedRow(root string) row {
	r := row{"evaluation on a fitted process with bins over a demo one", "1.10×", "not measured", "—"}
	out, err := goBench(root, "./core/design", "BenchmarkEvaluateFitted", "2000x")
	if err != nil {
		r.measured = "not measured (" + err.Error() + ")"
		return r
	}
	var demo, fitted []float64
	for _, l := range parseBench(out) {
		switch l.Name {
		case "BenchmarkEvaluateFitted/demo":
			demo = append(demo, l.NsPerOp)
		case "BenchmarkEvaluateFitted/fitted":
			fitted = append(fitted, l.NsPerOp)
		}
	}
	if len(demo) > 0 && len(fitted) > 0 {
		ratio := median(fitted) / median(demo)
		r.measured = fmt.Sprintf("%.2f× (%.1f µs against %.1f µs)", ratio, median(fitted)/1e3, median(demo)/1e3)
		r.within = verdict(ratio <= 1.10)
	}
	return r
}

// goBench runs one benchmark of a package natively, three times.
func goBench(root, pkg, pattern, benchtime string) ([]byte, error) {
	cmd := exec.Command("go", "test", "-run", "XXX", "-bench", pattern, "-benchtime", benchtime, "-count", "3", pkg)
	cmd.Dir = root
	out, err := cmd.CombinedOutput()
	if err != nil {
		return nil, fmt.Errorf("%s", strings.TrimSpace(tail(out, 1)))
	}
	return out, nil
}

func minimum(xs []float64) float64 {
	m := math.Inf(1)
	for _, x := range xs {
		m = math.Min(m, x)
	}
	return m
}

func scale(xs []float64, k float64) []float64 {
	out := make([]float64, len(xs))
	for i, x := range xs {
		out[i] = x * k
	}
	return out
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
		{"single_file_bytes", "single-file page size", "bytes", 1.8e6},
		{"mc_first_ms", "10,000 Monte Carlo samples in the page, first run", "ms", 1000},
		{"mc_again_ms", "10,000 Monte Carlo samples in the page, second run", "ms", 1000},
		{"fit_10k_ms", "fit of a 9,928-row characterization file in the page", "ms", 6000},
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
