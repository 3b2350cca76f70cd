package design

import "strings"

// Problem is one thing wrong with a fragment or a design: the key it
// concerns, the value as typed (or as held, for Validate), and what is wrong
// with it together with what is accepted instead.
type Problem struct {
	Key     string `json:"key"`
	Value   string `json:"value"`
	Message string `json:"message"` // without the key prefix
}

// String returns the problem as "key=value: message". A problem that
// concerns no key (a fragment too long to read) is just the message; an
// empty value leaves out the "=".
func (p Problem) String() string {
	switch {
	case p.Key == "" && p.Value == "":
		return p.Message
	case p.Value == "":
		return p.Key + ": " + p.Message
	}
	return p.Key + "=" + p.Value + ": " + p.Message
}

// FragmentError lists every problem found in a fragment by Decode, or in a
// design by Validate, in the order their keys appear (fragment order for
// Decode, key-table order for Validate).
type FragmentError struct {
	Problems []Problem
}

// Error joins the problems with "; ".
func (e *FragmentError) Error() string {
	var b strings.Builder
	for i, p := range e.Problems {
		if i > 0 {
			b.WriteString("; ")
		}
		b.WriteString(p.String())
	}
	return b.String()
}

// Problem returns the first problem about key and true, or false when there
// is none.
func (e *FragmentError) Problem(key string) (Problem, bool) {
	for _, p := range e.Problems {
		if p.Key == key {
			return p, true
		}
	}
	return Problem{}, false
}
