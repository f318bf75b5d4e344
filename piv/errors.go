package piv

import "fmt"

// InputError is a problem with user data. It names the file and, where they apply, the line and
// column (1-based; 0 means not applicable), e.g.
// "run3/frame_0042.csv:118:3: column "u": cannot read "1.2.3" as a number".
type InputError struct {
	File      string
	Line, Col int
	Msg       string
}

// Error implements error.
func (e *InputError) Error() string {
	switch {
	case e.Line > 0 && e.Col > 0:
		return fmt.Sprintf("%s:%d:%d: %s", e.File, e.Line, e.Col, e.Msg)
	case e.Line > 0:
		return fmt.Sprintf("%s:%d: %s", e.File, e.Line, e.Msg)
	case e.File != "":
		return fmt.Sprintf("%s: %s", e.File, e.Msg)
	}
	return e.Msg
}

// Errorf returns an *InputError for file, line and column with a formatted message.
func Errorf(file string, line, col int, format string, args ...any) error {
	return &InputError{File: file, Line: line, Col: col, Msg: fmt.Sprintf(format, args...)}
}
