package profile

import (
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestParseProfile(t *testing.T) {
	yamlOK := "character: maren\nfacts:\n  - id: home\n    text: I live in the lighthouse.\n    tags: [place]\n  - id: sea\n    text: I swim every morning.\n"
	p, err := ParseProfile("maren.yaml", []byte(yamlOK), FormatYAML)
	require.NoError(t, err)
	assert.Equal(t, "maren", p.Character)
	require.Len(t, p.Facts, 2)
	assert.Equal(t, "home", p.Facts[0].ID)
	assert.Equal(t, "I live in the lighthouse.", p.Facts[0].Text)
	assert.Equal(t, []string{"place"}, p.Facts[0].Tags)
	assert.Equal(t, 3, p.Facts[0].Line)
	assert.Equal(t, 6, p.Facts[1].Line)

	jsonOK := `{"character": "maren", "facts": [{"id": 1, "text": "I live in the lighthouse."}]}`
	p, err = ParseProfile("maren.json", []byte(jsonOK), FormatJSON)
	require.NoError(t, err)
	assert.Equal(t, "1", p.Facts[0].ID, "numeric ids are read as strings")

	p, err = ParseProfile("dir/maren.txt", []byte("# comment\nI live in the lighthouse.\n\nI swim every morning.\n"), FormatText)
	require.NoError(t, err)
	assert.Equal(t, "maren", p.Character)
	assert.Equal(t, []Fact{{ID: "line-2", Text: "I live in the lighthouse.", Line: 2}, {ID: "line-4", Text: "I swim every morning.", Line: 4}}, p.Facts)
}

func TestParseProfileErrors(t *testing.T) {
	cases := []struct {
		name, data string
		format     Format
		want       string
	}{
		{"p.yaml", "facts:\n  - id: a\n    text: x\n", FormatYAML, "p.yaml:1: character: missing or empty"},
		{"p.yaml", "character: c\n", FormatYAML, "p.yaml:1: facts: missing"},
		{"p.yaml", "character: c\nfacts: []\n", FormatYAML, "p.yaml: facts: the profile has no facts"},
		{"p.yaml", "character: c\nfacts: nope\n", FormatYAML, "p.yaml:2: facts: must be a list"},
		{"p.yaml", "character: c\nfacts:\n  - id: a\n", FormatYAML, "p.yaml:3: facts[0].text: missing"},
		{"p.yaml", "character: c\nfacts:\n  - text: x\n", FormatYAML, "p.yaml:3: facts[0].id: missing"},
		{"p.yaml", "character: c\nfacts:\n  - id: a\n    text: '  '\n", FormatYAML, "p.yaml:4: facts[0].text: empty"},
		{"p.yaml", "character: c\nfacts:\n  - id: a\n    text: x\n  - id: a\n    text: y\n", FormatYAML, `p.yaml:5: facts[1].id: duplicate id "a" (also on line 3)`},
		{"p.yaml", "character: c\nfacts:\n  - id: a\n    text: [1, 2]\n", FormatYAML, "p.yaml:4: facts[0].text: must be a string"},
		{"p.yaml", "character: c\nfacts:\n  - id: a\n    text: caf\xe9\n", FormatYAML, "p.yaml:4: invalid UTF-8"},
		{"p.json", "{\"character\": \"c\",\n \"facts\": [\n}", FormatJSON, "p.json:3: invalid JSON"},
		{"p.txt", "# only comments\n\n", FormatText, "p.txt: facts: the profile has no facts"},
	}
	for _, c := range cases {
		_, err := ParseProfile(c.name, []byte(c.data), c.format)
		require.Error(t, err, c.data)
		assert.Contains(t, err.Error(), c.want)
	}
}

func TestReadProfileByExtension(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "maren.yml")
	require.NoError(t, os.WriteFile(path, []byte("character: m\nfacts:\n  - {id: a, text: x}\n"), 0o644))
	p, err := ReadProfile(path, FormatAuto)
	require.NoError(t, err)
	assert.Equal(t, path, p.File)
	_, err = ReadProfile(filepath.Join(dir, "nope.yaml"), FormatAuto)
	assert.Error(t, err)
	odd := filepath.Join(dir, "maren.cfg")
	require.NoError(t, os.WriteFile(odd, []byte("x"), 0o644))
	_, err = ReadProfile(odd, FormatAuto)
	assert.ErrorContains(t, err, "cannot tell the profile format")
}
