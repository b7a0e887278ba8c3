package gainsay

import (
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

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
		`{"id": "k", "text": "  "}`,
		`["not", "an", "object"]`,
	}, "\n")
	got := readAll(t, data, FormatJSONL, 30)
	require.Len(t, got, 12, "blank line skipped, every other line is a reply")
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
		"r.jsonl:7: text: invalid UTF-8 at byte 25 of the line",
		"r.jsonl:8: id: missing or empty",
		"r.jsonl:9: text: 31 characters, over the limit of 30",
		"r.jsonl:10: text: must be a string",
		"r.jsonl:11: context: must be a string",
		"r.jsonl:12: text: empty",
		"r.jsonl:13: not a JSON object but an array",
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
	assert.Equal(t, "f", got[5].ID, "even when the text has invalid UTF-8")

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
