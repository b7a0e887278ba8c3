package textpos

import (
	"testing"
	"unicode"

	"github.com/stretchr/testify/assert"
)

func TestRunesAndBytes(t *testing.T) {
	// Code points as Python counts them: len("Zürich 🌊 sea") == 12; "sea" starts at 9.
	s := "Zürich 🌊 sea"
	x := New(s)
	cases := []struct{ bytes, runes int }{{0, 0}, {1, 1}, {3, 2}, {7, 6}, {8, 7}, {12, 8}, {13, 9}, {len(s), 12}}
	for _, c := range cases {
		assert.Equal(t, c.runes, x.Runes(c.bytes), "byte %d", c.bytes)
		assert.Equal(t, c.bytes, x.Bytes(c.runes), "rune %d", c.runes)
	}
	assert.Equal(t, 2, x.Runes(2), "inside ü: the characters that start before")
	assert.Equal(t, len(s), x.Bytes(99))
	ascii := New("plain")
	assert.Equal(t, 3, ascii.Runes(3))
	assert.Equal(t, 5, ascii.Bytes(9))
}

func TestTrim(t *testing.T) {
	s := "  «hé»  "
	a, b := Trim(s, 0, len(s), unicode.IsSpace)
	assert.Equal(t, "«hé»", s[a:b])
	a, b = Trim(s, a, b, unicode.IsPunct)
	assert.Equal(t, "hé", s[a:b])
	a, b = Trim("   ", 0, 3, unicode.IsSpace)
	assert.Equal(t, a, b)
}
