// Command bench measures the Go core against its speed budgets and prints
// one Markdown table. Run it from anywhere in the module:
//
//	go run ./bench [-rounds 5] [-nativetime 1s] [-wasmtime 2s]
//
// It compiles the tests of core/design twice, natively and as js/wasm (run
// under Node through Go's go_js_wasm_exec), takes the allocations from one
// native run of BenchmarkEvaluate and BenchmarkEvaluatePoints (to show that
// the sweep does not allocate per point), and then runs BenchmarkEvaluate
// in alternating rounds, native then js/wasm, so that both see the same
// load on a shared machine. Each figure reads "median (lowest … highest
// round, n rounds)": the spread over rounds is the measurement's noise. A
// second table gives each design's median times and ratio.
//
// It also reads site/dist/bench.json for the figures the browser benchmark
// writes (slider_p95_ms, open_to_plot_ms, single_file_bytes). A figure it
// cannot measure reads "not measured"; a step that fails is reported on
// standard error with its output, and the exit status is 1.
package main
