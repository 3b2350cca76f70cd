package extract

// Error says why a table cannot be fitted, in terms of what the data lack
// and what to add.
type Error struct{ Message string }

func (e *Error) Error() string { return "fit: " + e.Message }
