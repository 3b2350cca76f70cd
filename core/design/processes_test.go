package design

import (
	"slices"
	"testing"
)

// The process list the bridge reads through this package is the process
// key's own list of choices.
func TestProcesses(t *testing.T) {
	names := Processes()
	var choices []string
	for _, k := range Schema("d180") {
		if k.Key == "proc" {
			choices = k.Choices
		}
	}
	if len(names) == 0 || !slices.Equal(names, choices) {
		t.Errorf("Processes() = %q, the proc key offers %q", names, choices)
	}
	for _, n := range names {
		if !IsProcess(n) {
			t.Errorf("IsProcess(%q) = false", n)
		}
	}
	for _, n := range []string{"", "d18", "D180", "tsmc"} {
		if IsProcess(n) {
			t.Errorf("IsProcess(%q) = true", n)
		}
	}
	names[0] = "changed" // the caller's own slice
	if Processes()[0] == "changed" {
		t.Error("Processes hands out the package's own slice")
	}
}
