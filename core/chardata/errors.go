package chardata

import "strconv"

// Error is a problem with a characterization file, placed by its line and
// column (both 1-based; 0 when the whole line or the whole file is meant).
type Error struct {
	Line, Column int
	Header       string // the column's name, when Column is set
	Message      string // what is wrong and what is accepted
}

func (e *Error) Error() string {
	s := ""
	if e.Line > 0 {
		s = "line " + strconv.Itoa(e.Line)
		if e.Column > 0 {
			s += ", column " + strconv.Itoa(e.Column)
			if e.Header != "" {
				s += " (" + e.Header + ")"
			}
		}
		s += ": "
	}
	return s + e.Message
}
