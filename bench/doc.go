// Command bench measures the Go core against its speed budgets and prints
// one Markdown table. Run it from anywhere in the module:
//
//	go run ./bench
//
// It runs the BenchmarkEvaluate suite of core/design natively (with
// BenchmarkEvaluatePoints, to show that the sweep does not allocate per
// point) and again as js/wasm under Node through Go's go_js_wasm_exec, then
// reads site/dist/bench.json for the figures the browser benchmark writes
// (slider_p95_ms, open_to_plot_ms, single_file_bytes). A figure it cannot
// measure reads "not measured"; a step that fails is reported on standard
// error with its output, and the exit status is 1.
package main
