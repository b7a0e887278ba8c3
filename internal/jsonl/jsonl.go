// Package jsonl reads JSON Lines: one value a line, blank lines skipped, with the 1-based line number
// of each value for error messages.
package jsonl

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
)

// Scanner yields the non-blank lines of a reader. Lines may be of any length.
type Scanner struct {
	r    *bufio.Reader
	line int
}

// NewScanner reads from r.
func NewScanner(r io.Reader) *Scanner { return &Scanner{r: bufio.NewReaderSize(r, 1<<16)} }

// Next returns the next non-blank line without its line ending (a UTF-8 byte-order mark at the start of
// the first line is dropped) and its 1-based number, or io.EOF.
func (s *Scanner) Next() ([]byte, int, error) {
	for {
		raw, err := s.r.ReadBytes('\n')
		if len(raw) == 0 && err != nil {
			if errors.Is(err, io.EOF) {
				return nil, 0, io.EOF
			}
			return nil, 0, err
		}
		s.line++
		if s.line == 1 {
			raw = bytes.TrimPrefix(raw, []byte("\xef\xbb\xbf"))
		}
		raw = bytes.TrimRight(raw, "\r\n")
		if len(bytes.TrimSpace(raw)) > 0 {
			return raw, s.line, nil
		}
	}
}

// Each calls fn on every non-blank line of a file, with its 1-based number, until fn returns an error.
func Each(path string, fn func(raw []byte, line int) error) error {
	f, err := os.Open(path)
	if err != nil {
		return err
	}
	defer f.Close()
	s := NewScanner(f)
	for {
		raw, line, err := s.Next()
		if errors.Is(err, io.EOF) {
			return nil
		}
		if err != nil {
			return fmt.Errorf("%s: %w", path, err)
		}
		if err := fn(raw, line); err != nil {
			return err
		}
	}
}

// ReadFile decodes every line of a file into a T.
func ReadFile[T any](path string) ([]T, error) {
	var out []T
	err := Each(path, func(raw []byte, line int) error {
		var v T
		if err := json.Unmarshal(raw, &v); err != nil {
			return fmt.Errorf("%s:%d: %w", path, line, err)
		}
		out = append(out, v)
		return nil
	})
	if err != nil {
		return nil, err
	}
	return out, nil
}
