package profile

import (
	"os"
	"path/filepath"
	"strings"
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

func readAll(t *testing.T, data string, format Format, max int) []Reply {
	t.Helper()
	rr := NewReplyReader(strings.NewReader(data), "r.jsonl", format, max)
	var out []Reply
	for {
		r, err := rr.Next()
		if err != nil {
			break
		}
		out = append(out, r)
	}
	return out
}

func TestReplyReader(t *testing.T) {
	data := strings.Join([]string{
		`{"id": "a", "text": "Hello.", "context": "Hi?", "step": 7, "tags": ["x"]}`,
		``,
		`{"id": 2, "text": "Numbers are fine as ids."}`,
		`{"id": "c"}`,
		`{"id": "d", "text": 5}`,
		`not json`,
		"{\"id\": \"f\", \"text\": \"caf\xe9\"}",
		`{"text": "no id"}`,
		`{"id": "h", "text": "` + strings.Repeat("é", 31) + `"}`,
		`{"id": "i", "text": null}`,
		`{"id": "j", "text": "ok", "context": 3}`,
	}, "\n")
	got := readAll(t, data, FormatJSONL, 30)
	require.Len(t, got, 10, "blank line skipped, every other line is a reply")
	assert.NoError(t, got[0].Err)
	assert.Equal(t, "a", got[0].ID)
	assert.Equal(t, "Hi?", got[0].Context)
	assert.Equal(t, `7`, string(got[0].Extra["step"]))
	assert.Equal(t, `["x"]`, string(got[0].Extra["tags"]))
	assert.Equal(t, "2", got[1].ID)
	assert.Equal(t, 3, got[1].Line)
	wantErr := []string{
		"", "",
		"r.jsonl:4: text: missing",
		"r.jsonl:5: text: must be a string",
		"r.jsonl:6: not a JSON object",
		"r.jsonl:7: invalid UTF-8 at byte 25 of the line",
		"r.jsonl:8: id: missing or empty",
		"r.jsonl:9: text: 31 characters, over the limit of 30",
		"r.jsonl:10: text: must be a string",
		"r.jsonl:11: context: must be a string",
	}
	for i, w := range wantErr {
		if w == "" {
			assert.NoError(t, got[i].Err, "reply %d", i)
			continue
		}
		require.Error(t, got[i].Err, "reply %d", i)
		assert.Contains(t, got[i].Err.Error(), w)
	}
	assert.Equal(t, "c", got[2].ID, "the id is kept when known")

	text := readAll(t, "\ufeffFirst reply.\n\nSecond reply.\r\n", FormatText, 0)
	require.Len(t, text, 2)
	assert.Equal(t, Reply{ID: "line-1", Text: "First reply.", Line: 1}, text[0])
	assert.Equal(t, Reply{ID: "line-3", Text: "Second reply.", Line: 3}, text[1])
}

func TestReplyFormat(t *testing.T) {
	for name, want := range map[string]Format{"-": FormatJSONL, "a.jsonl": FormatJSONL, "a.NDJSON": FormatJSONL, "a.txt": FormatText} {
		got, err := ReplyFormat(name)
		require.NoError(t, err)
		assert.Equal(t, want, got, name)
	}
	_, err := ReplyFormat("a.csv")
	assert.ErrorContains(t, err, "cannot tell the replies format")
}
