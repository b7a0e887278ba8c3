package gainsay

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"maps"
	"path/filepath"
	"slices"
	"strings"
	"unicode/utf8"

	"github.com/gainsay/gainsay/internal/inputerr"
	"github.com/gainsay/gainsay/internal/jsonl"
	"github.com/gainsay/gainsay/internal/textpos"
)

// InputError is bad input: the file, the 1-based line (0 when unknown), the field and what is wrong.
type InputError = inputerr.Error

func inputErr(file string, line int, field, format string, args ...any) *InputError {
	return inputerr.New(file, line, field, format, args...)
}

// Format names a replies format.
type Format string

// The replies formats.
const (
	FormatAuto  Format = ""      // from the file name (ReplyFormat)
	FormatJSONL Format = "jsonl" // one JSON object a line
	FormatText  Format = "text"  // one reply a line
)

// Reply is one sampled reply to check. A reply that could not be read has Err set: it still gets its
// own output record, so that every input line is accounted for.
type Reply struct {
	ID      string
	Text    string
	Context string
	// Extra holds the fields gainsay does not know, kept verbatim and passed through to the record.
	Extra map[string]json.RawMessage
	Line  int
	Err   error
}

// DefaultMaxReplyChars is the default limit on a reply's length, in code points.
const DefaultMaxReplyChars = 4000

// ReplyFormat picks the replies format from a file name: JSON Lines for .jsonl, .ndjson and .json and
// for standard input ("-"), plain text for .txt. Anything else needs an explicit format.
func ReplyFormat(name string) (Format, error) {
	if name == "-" {
		return FormatJSONL, nil
	}
	switch strings.ToLower(filepath.Ext(name)) {
	case ".jsonl", ".ndjson", ".json":
		return FormatJSONL, nil
	case ".txt", ".text":
		return FormatText, nil
	}
	return "", inputErr(name, 0, "", "cannot tell the replies format from the extension %q; use .jsonl or .txt, or name the format", filepath.Ext(name))
}

// ReplyReader reads replies one at a time: JSON Lines (one object a line with id and text, optional
// context, other fields kept) or plain text (one reply a line, id "line-N"). Blank lines are skipped.
type ReplyReader struct {
	s        *jsonl.Scanner
	name     string
	format   Format
	maxChars int
	line     int
}

// NewReplyReader reads from r; name is used in errors. maxChars limits a reply's length in code points
// (0: DefaultMaxReplyChars).
func NewReplyReader(r io.Reader, name string, format Format, maxChars int) *ReplyReader {
	if maxChars <= 0 {
		maxChars = DefaultMaxReplyChars
	}
	return &ReplyReader{s: jsonl.NewScanner(r), name: name, format: format, maxChars: maxChars}
}

// Next returns the next reply, or io.EOF at the end. Other errors are read failures of the underlying
// reader; bad lines come back as replies with Err set.
func (rr *ReplyReader) Next() (Reply, error) {
	raw, line, err := rr.s.Next()
	if errors.Is(err, io.EOF) {
		return Reply{}, io.EOF
	}
	if err != nil {
		return Reply{}, fmt.Errorf("%s: %w", rr.name, err)
	}
	rr.line = line
	return rr.parse(raw), nil
}

func (rr *ReplyReader) parse(raw []byte) Reply {
	if rr.format == FormatText {
		rep := Reply{Line: rr.line}
		if !utf8.Valid(raw) {
			rep.Err = inputErr(rr.name, rr.line, "", "invalid UTF-8 at byte %d of the line", textpos.FirstInvalidUTF8(raw)+1)
			return rep
		}
		rep.ID = fmt.Sprintf("line-%d", rr.line)
		rep.Text = string(raw)
		return replyParser{rr.name, rr.line, rr.maxChars}.checkLength(rep)
	}
	return ParseReply(raw, rr.name, rr.line, rr.maxChars)
}

// ParseReply reads one reply object ({"id", "text", "context"?, ...}); where and line name it in
// errors (line 0: where alone, e.g. "replies[3]"). A bad reply comes back with Err set.
func ParseReply(raw []byte, where string, line, maxChars int) Reply {
	if maxChars <= 0 {
		maxChars = DefaultMaxReplyChars
	}
	return replyParser{where, line, maxChars}.parse(raw)
}

type replyParser struct {
	name     string
	line     int
	maxChars int
}

func (rr replyParser) fail(rep Reply, field, format string, args ...any) Reply {
	rep.Err = inputErr(rr.name, rr.line, field, format, args...)
	return rep
}

func (rr replyParser) parse(raw []byte) Reply {
	rep := Reply{Line: rr.line}
	// encoding/json would quietly turn invalid bytes into U+FFFD; the reply fails instead, but keeps
	// its id where the id itself is valid, so that its record can be joined back to it.
	invalid := !utf8.Valid(raw)
	var fields map[string]json.RawMessage
	if err := json.Unmarshal(raw, &fields); err != nil {
		if invalid {
			return rr.fail(rep, "", "invalid UTF-8 at byte %d of the line", textpos.FirstInvalidUTF8(raw)+1)
		}
		return rr.fail(rep, "", "%s", notAnObject(raw, err))
	}
	if idRaw, ok := fields["id"]; ok {
		id, err := scalarString(idRaw)
		if err != nil {
			return rr.fail(rep, "id", "%v", err)
		}
		if utf8.Valid(idRaw) {
			rep.ID = id
		}
	}
	if invalid {
		for _, k := range slices.Sorted(maps.Keys(fields)) {
			if v := fields[k]; !utf8.Valid(v) {
				return rr.fail(rep, k, "invalid UTF-8 at byte %d of the line", bytes.Index(raw, v)+textpos.FirstInvalidUTF8(v)+1)
			}
		}
		return rr.fail(rep, "", "invalid UTF-8 at byte %d of the line", textpos.FirstInvalidUTF8(raw)+1)
	}
	if rep.ID == "" {
		return rr.fail(rep, "id", "missing or empty")
	}
	textRaw, ok := fields["text"]
	if !ok {
		return rr.fail(rep, "text", "missing")
	}
	if err := json.Unmarshal(textRaw, &rep.Text); err != nil || bytes.Equal(bytes.TrimSpace(textRaw), []byte("null")) {
		return rr.fail(rep, "text", "must be a string")
	}
	if strings.TrimSpace(rep.Text) == "" {
		return rr.fail(rep, "text", "empty: nothing to check")
	}
	if c, ok := fields["context"]; ok && !bytes.Equal(bytes.TrimSpace(c), []byte("null")) {
		if err := json.Unmarshal(c, &rep.Context); err != nil {
			return rr.fail(rep, "context", "must be a string")
		}
	}
	for k, v := range fields {
		switch k {
		case "id", "text", "context":
		default:
			if rep.Extra == nil {
				rep.Extra = map[string]json.RawMessage{}
			}
			rep.Extra[k] = v
		}
	}
	return rr.checkLength(rep)
}

func (rr replyParser) checkLength(rep Reply) Reply {
	if n := utf8.RuneCountInString(rep.Text); n > rr.maxChars {
		return rr.fail(rep, "text", "%d characters, over the limit of %d", n, rr.maxChars)
	}
	return rep
}

// notAnObject says plainly why a line is not a JSON object: another JSON value, or not JSON.
func notAnObject(raw []byte, err error) string {
	var v any
	if json.Unmarshal(raw, &v) == nil {
		kind := "a number"
		switch v.(type) {
		case []any:
			kind = "an array"
		case string:
			kind = "a string"
		case bool:
			kind = "true or false"
		case nil:
			kind = "null"
		}
		return fmt.Sprintf("not a JSON object but %s; a reply is {\"id\": ..., \"text\": ...}", kind)
	}
	var se *json.SyntaxError
	if errors.As(err, &se) {
		return fmt.Sprintf("not a JSON object: invalid JSON at byte %d of the line", se.Offset)
	}
	return "not a JSON object: " + err.Error()
}

// scalarString accepts a JSON string or number as an id.
func scalarString(raw json.RawMessage) (string, error) {
	var s string
	if err := json.Unmarshal(raw, &s); err == nil {
		return s, nil
	}
	var n json.Number
	dec := json.NewDecoder(bytes.NewReader(raw))
	dec.UseNumber()
	if err := dec.Decode(&n); err == nil {
		return n.String(), nil
	}
	return "", errors.New("must be a string or a number")
}
