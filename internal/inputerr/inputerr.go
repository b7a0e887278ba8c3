// Package inputerr is the error for bad input that gainsay's readers share: the file, the line and
// the field it concerns, and what is wrong.
package inputerr

import "fmt"

// Error is bad input: the file, the 1-based line (0 when unknown), the field and what is wrong.
type Error struct {
	File  string
	Line  int
	Field string
	Msg   string
}

// Error says "file:line: field: message".
func (e *Error) Error() string {
	loc := e.File
	if e.Line > 0 {
		loc = fmt.Sprintf("%s:%d", e.File, e.Line)
	}
	if e.Field != "" {
		return fmt.Sprintf("%s: %s: %s", loc, e.Field, e.Msg)
	}
	return fmt.Sprintf("%s: %s", loc, e.Msg)
}

// New formats an *Error.
func New(file string, line int, field, format string, args ...any) *Error {
	return &Error{File: file, Line: line, Field: field, Msg: fmt.Sprintf(format, args...)}
}
