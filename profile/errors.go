package profile

import "github.com/gainsay/gainsay/internal/inputerr"

// InputError is bad input: the file, the 1-based line (0 when unknown), the field and what is wrong.
type InputError = inputerr.Error

func inputErr(file string, line int, field, format string, args ...any) *InputError {
	return inputerr.New(file, line, field, format, args...)
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
