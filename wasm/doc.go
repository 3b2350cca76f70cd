// Command wasm is the WebAssembly bridge between the Stagewright page and the
// Go core. Built with GOOS=js GOARCH=wasm, it puts one namespace object,
// globalThis.stagewright, into the JavaScript world with:
//
//	version              string: the build identifier; the page refuses to run on a mismatch
//	schema(proc)         {result: [key info…]} or {error: {code, message, key}}
//	evaluate(fragment)   {result: evaluation} or {error: {code, message, key}}
//	evaluateMany([f…])   {result: [response…]} (one response per fragment, for sweeps)
//
// The request and response types and the mapping from Go errors to stable
// error codes live in bridge.go, which has no build tags and is tested with
// the ordinary go test. Only the JavaScript glue (glue_js.go) needs js/wasm.
// Every exported handler recovers from panics and answers with an error
// object of code "internal", so a bug never stops the Go runtime.
package main
