package design

import "stagewright/core/device"

// Processes returns the names of the built-in demo processes, in the order
// the process key lists them. The slice is the caller's.
func Processes() []string { return device.BuiltinNames() }

// IsProcess reports whether name is a built-in demo process.
func IsProcess(name string) bool {
	_, ok := device.Builtin(name)
	return ok
}
