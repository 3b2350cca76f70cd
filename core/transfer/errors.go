package transfer

import "fmt"

// Error is a transfer or distortion analysis that could not be done. Key
// names the design input (or analysis option, such as "amp" or "points")
// most to blame, when there is one.
type Error struct {
	Key     string
	Message string
}

func (e *Error) Error() string {
	if e.Key == "" {
		return e.Message
	}
	return e.Key + ": " + e.Message
}

func errorf(key, format string, a ...any) *Error {
	return &Error{Key: key, Message: fmt.Sprintf(format, a...)}
}
