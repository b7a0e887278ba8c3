package tokenizer

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"strings"

	"github.com/dlclark/regexp2/v2"
)

// file is the top level of tokenizer.json. Truncation and padding are read and ignored: callers pad
// per batch and truncate as they need.
type file struct {
	Version       string          `json:"version"`
	Truncation    json.RawMessage `json:"truncation"`
	Padding       json.RawMessage `json:"padding"`
	AddedTokens   []addedToken    `json:"added_tokens"`
	Normalizer    json.RawMessage `json:"normalizer"`
	PreTokenizer  json.RawMessage `json:"pre_tokenizer"`
	Model         json.RawMessage `json:"model"`
	PostProcessor json.RawMessage `json:"post_processor"`
	Decoder       json.RawMessage `json:"decoder"`
}

type addedToken struct {
	ID         int    `json:"id"`
	Content    string `json:"content"`
	SingleWord bool   `json:"single_word"`
	LStrip     bool   `json:"lstrip"`
	RStrip     bool   `json:"rstrip"`
	Normalized bool   `json:"normalized"`
	Special    bool   `json:"special"`
}

// isNull reports a missing or null component.
func isNull(raw json.RawMessage) bool {
	s := bytes.TrimSpace(raw)
	return len(s) == 0 || string(s) == "null"
}

// componentType reads the "type" of a component object.
func componentType(raw json.RawMessage) (string, error) {
	var head struct {
		Type string `json:"type"`
	}
	if err := json.Unmarshal(raw, &head); err != nil {
		return "", fmt.Errorf("not an object with a type: %w", err)
	}
	if head.Type == "" {
		return "", errors.New("no type")
	}
	return head.Type, nil
}

// build reads the component at path: none where it is absent or null, else the one its type names,
// made by newFn; errors name the component.
func build[T any](raw json.RawMessage, path string, none T, newFn func(typ string, raw json.RawMessage, path string) (T, error)) (T, error) {
	if isNull(raw) {
		return none, nil
	}
	var zero T
	typ, err := componentType(raw)
	if err != nil {
		return zero, errAt(path, "", err)
	}
	c, err := newFn(typ, raw, path)
	if err != nil {
		return zero, errAt(path, typ, err)
	}
	return c, nil
}

// decodeStrict decodes a component's object into its typed configuration; a field that the type
// does not know is an error, so that a setting this package would ignore is never ignored silently.
func decodeStrict(raw json.RawMessage, v any) error {
	dec := json.NewDecoder(bytes.NewReader(raw))
	dec.DisallowUnknownFields()
	if err := dec.Decode(v); err != nil {
		return errors.New(strings.TrimPrefix(err.Error(), "json: "))
	}
	return nil
}

// componentError names where in tokenizer.json a problem is: "pre_tokenizer.pretokenizers[1] (Split)".
type componentError struct {
	path, typ string
	err       error
}

func (e *componentError) Error() string {
	if e.typ == "" {
		return fmt.Sprintf("%s: %v", e.path, e.err)
	}
	return fmt.Sprintf("%s (%s): %v", e.path, e.typ, e.err)
}

func (e *componentError) Unwrap() error { return e.err }

func errAt(path, typ string, err error) error {
	var ce *componentError
	if errors.As(err, &ce) {
		return err // already names the innermost component
	}
	return &componentError{path, typ, err}
}

// unsupported says that a component or setting is outside what this package reproduces.
func unsupported(format string, args ...any) error {
	return fmt.Errorf(format+" is not supported", args...)
}

// pattern is a tokenizer.json pattern: {"String": s}, a literal, or {"Regex": re}, an Oniguruma
// regular expression that regexp2 runs (look-ahead included).
type pattern struct {
	String *string `json:"String"`
	Regex  *string `json:"Regex"`
}

func (p pattern) compile() (*regexp2.Regexp, error) {
	switch {
	case p.String != nil:
		return regexp2.Compile(regexp2.Escape(*p.String))
	case p.Regex != nil:
		re, err := regexp2.Compile(*p.Regex)
		if err != nil {
			return nil, fmt.Errorf("pattern %q: %w", *p.Regex, err)
		}
		return re, nil
	}
	return nil, errors.New("pattern: want String or Regex")
}

// readReplace reads a Replace component (normalizer or decoder): a pattern and its replacement.
func readReplace(raw json.RawMessage) (*regexp2.Regexp, string, error) {
	var c struct {
		Type    string  `json:"type"`
		Pattern pattern `json:"pattern"`
		Content string  `json:"content"`
	}
	if err := decodeStrict(raw, &c); err != nil {
		return nil, "", err
	}
	re, err := c.Pattern.compile()
	return re, c.Content, err
}

// match is a character range of a text and whether it is a match of the pattern or text between.
type match struct {
	start, end int
	isMatch    bool
}

// findMatches cuts t into matches of re and the stretches between them, covering all of t, as the
// reference's Pattern::find_matches does; invert swaps which is which.
func findMatches(re *regexp2.Regexp, t text, invert bool) ([]match, error) {
	if len(t) == 0 {
		return []match{{0, 0, invert}}, nil
	}
	found, err := re.FindAllRunesIndex(t.runes(), -1)
	if err != nil {
		return nil, err
	}
	var out []match
	prev := 0
	for _, m := range found {
		if m[0] != prev {
			out = append(out, match{prev, m[0], invert})
		}
		out = append(out, match{m[0], m[1], !invert})
		prev = m[1]
	}
	if prev != len(t) {
		out = append(out, match{prev, len(t), invert})
	}
	return out, nil
}
