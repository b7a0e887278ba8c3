package sentence

import (
	"bufio"
	"os"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// The sentence-break test cases of Unicode 15.0.0 (UCD auxiliary/SentenceBreakTest.txt, see
// testdata/SOURCES.md): the raw boundaries must match the published ones case by case.
func TestUAX29Conformance(t *testing.T) {
	f, err := os.Open("testdata/SentenceBreakTest.txt")
	require.NoError(t, err)
	defer f.Close()
	sc := bufio.NewScanner(f)
	cases := 0
	for sc.Scan() {
		line, _, _ := strings.Cut(sc.Text(), "#")
		line = strings.TrimSpace(line)
		if line == "" {
			continue
		}
		var text strings.Builder
		var want []int // byte offsets of the boundaries inside the text
		for _, field := range strings.Fields(line) {
			switch field {
			case "÷":
				want = append(want, text.Len())
			case "×":
			default:
				cp, err := strconv.ParseUint(field, 16, 32)
				require.NoError(t, err)
				text.WriteRune(rune(cp))
			}
		}
		s := text.String()
		var got []int
		for _, b := range boundaries(s) {
			got = append(got, b.Start)
		}
		got = append(got, len(s))
		assert.Equal(t, want, got, "%s", line)
		cases++
	}
	assert.Equal(t, 502, cases, "all cases of the 15.0.0 file")
}

// Behaviour on top of UAX #29 (common practice, no published reference): abbreviations and initials do
// not end sentences, decimals stay whole, white space is trimmed, line breaks always split.
func TestSplit(t *testing.T) {
	cases := []struct {
		text string
		want []string
	}{
		{"I live on the coast. I have never seen the sea!", []string{"I live on the coast.", "I have never seen the sea!"}},
		{"Dr. Ada Lune runs the lighthouse. She is kind.", []string{"Dr. Ada Lune runs the lighthouse.", "She is kind."}},
		{"It costs 3.50 coins. Cheap?  Yes.", []string{"It costs 3.50 coins.", "Cheap?", "Yes."}},
		{"Ask J. R. Moss about it. He knows.", []string{"Ask J. R. Moss about it.", "He knows."}},
		{"e.g. the tide. Then we sail.", []string{"e.g. the tide.", "Then we sail."}},
		{"  padded  ", []string{"padded"}},
		{"", nil},
		{"   \n  ", nil},
		{"First line\nSecond line", []string{"First line", "Second line"}},
		{"We met on St.\nThen left.", []string{"We met on St.", "Then left."}},
		{"Ich wohne in Zürich. Das Meer? Nie gesehen.", []string{"Ich wohne in Zürich.", "Das Meer?", "Nie gesehen."}},
		{"我住在海边。我从没见过大海。", []string{"我住在海边。", "我从没见过大海。"}},
		{"\"Never!\" she said. Fine.", []string{"\"Never!\" she said.", "Fine."}},
	}
	for _, c := range cases {
		var got []string
		for _, s := range Split(c.text) {
			got = append(got, c.text[s.Start:s.End])
		}
		assert.Equal(t, c.want, got, "%q", c.text)
	}
}
