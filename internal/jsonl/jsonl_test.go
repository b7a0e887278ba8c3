package jsonl

import (
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestScanner(t *testing.T) {
	s := NewScanner(strings.NewReader("\ufeff{\"a\":1}\r\n\n  \n{\"a\":2}\n" + strings.Repeat("x", 200000)))
	var got []string
	var lines []int
	for {
		raw, line, err := s.Next()
		if errors.Is(err, io.EOF) {
			break
		}
		require.NoError(t, err)
		got = append(got, string(raw[:min(len(raw), 7)]))
		lines = append(lines, line)
	}
	assert.Equal(t, []string{`{"a":1}`, `{"a":2}`, "xxxxxxx"}, got)
	assert.Equal(t, []int{1, 4, 5}, lines, "blank lines count, a long last line without newline is read")
}

func TestReadFile(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "x.jsonl")
	require.NoError(t, os.WriteFile(p, []byte("{\"a\":1}\n\n{\"a\":\"no\"}\n"), 0o644))
	_, err := ReadFile[struct{ A int }](p)
	assert.ErrorContains(t, err, "x.jsonl:3:")
	require.NoError(t, os.WriteFile(p, []byte("{\"a\":1}\n{\"a\":2}\n"), 0o644))
	v, err := ReadFile[struct{ A int }](p)
	require.NoError(t, err)
	assert.Len(t, v, 2)
}
