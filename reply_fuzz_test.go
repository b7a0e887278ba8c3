package gainsay

import (
	"bytes"
	"errors"
	"io"
	"testing"
	"unicode/utf8"
)

// The replies reader never panics and loses nothing: one reply per non-blank line, each either
// readable (an id, UTF-8 text) or carrying its error and line. Seeds: testdata/fuzz/FuzzReplyReader.
func FuzzReplyReader(f *testing.F) {
	f.Add([]byte(`{"id": "a", "text": "Hello.", "context": "Hi?", "step": 7}`+"\n\n"+`{"id": 2, "text": "x"}`), false)
	f.Add([]byte("{\"id\": \"f\", \"text\": \"caf\xe9\"}\n[1, 2]\n\"just a string\"\n{\"text\": 5}"), false)
	f.Add([]byte("\ufeffFirst reply.\r\n\nSecond reply.\n\xff\n"), true)
	f.Fuzz(func(t *testing.T, data []byte, text bool) {
		format := FormatJSONL
		if text {
			format = FormatText
		}
		want := 0
		for i, line := range bytes.Split(data, []byte("\n")) {
			if i == 0 {
				line = bytes.TrimPrefix(line, []byte("\xef\xbb\xbf"))
			}
			if len(bytes.TrimSpace(bytes.TrimRight(line, "\r"))) > 0 {
				want++
			}
		}
		rr := NewReplyReader(bytes.NewReader(data), "fuzz", format, 50)
		got, last := 0, 0
		for {
			r, err := rr.Next()
			if errors.Is(err, io.EOF) {
				break
			}
			if err != nil {
				t.Fatal(err)
			}
			got++
			if r.Line <= last {
				t.Fatalf("line %d after %d", r.Line, last)
			}
			last = r.Line
			if r.Err == nil && (r.ID == "" || !utf8.ValidString(r.Text) || utf8.RuneCountInString(r.Text) > 50) {
				t.Fatalf("accepted %+v", r)
			}
		}
		if got != want {
			t.Fatalf("%d replies from %d non-blank lines", got, want)
		}
	})
}
