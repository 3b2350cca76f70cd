//go:build !(js && wasm)

package main

import (
	"fmt"
	"os"
)

// main explains how to build the bridge; the native build exists so the
// request handling in bridge.go can be tested with the ordinary go test.
func main() {
	fmt.Fprintln(os.Stderr, "stagewright bridge: build with GOOS=js GOARCH=wasm (see web.mk, `make site`)")
	os.Exit(2)
}
