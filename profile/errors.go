package profile

import "fmt"

// InputError is bad input: the file, the 1-based line (0 when unknown), the field and what is wrong.
type InputError struct {
	File  string
	Line  int
	Field string
	Msg   string
}

func (e *InputError) Error() string {
	loc := e.File
	if e.Line > 0 {
		loc = fmt.Sprintf("%s:%d", e.File, e.Line)
	}
	if e.Field != "" {
		return fmt.Sprintf("%s: %s: %s", loc, e.Field, e.Msg)
	}
	return fmt.Sprintf("%s: %s", loc, e.Msg)
}

func inputErr(file string, line int, field, format string, args ...any) *InputError {
	return &InputError{File: file, Line: line, Field: field, Msg: fmt.Sprintf(format, args...)}
}

// lineOf returns the 1-based line of byte offset off in data.
func lineOf(data []byte, off int) int {
	line := 1
	for i := 0; i < off && i < len(data); i++ {
		if data[i] == '\n' {
			line++
		}
	}
	return line
}
