package profile

import (
	"bytes"
	"cmp"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"unicode/utf8"

	"gopkg.in/yaml.v3"

	"github.com/gainsay/gainsay/internal/textpos"
)

// Profile is a character and the facts its replies must not contradict.
type Profile struct {
	Character string
	Facts     []Fact
	// File is where the profile was read from, for messages.
	File string
}

// Fact is one statement about the character. Line is where it stands in its file (0 if not from a file).
type Fact struct {
	ID   string   `json:"id" yaml:"id"`
	Text string   `json:"text" yaml:"text"`
	Tags []string `json:"tags,omitempty" yaml:"tags,omitempty"`
	Line int      `json:"-" yaml:"-"`

	idLine, textLine int // where the id and text values stand, for messages
}

// Format names a profile format.
type Format string

// The profile formats.
const (
	FormatAuto Format = ""     // from the extension (ReadProfile)
	FormatYAML Format = "yaml" // character and facts
	FormatJSON Format = "json" // the same, in JSON
	FormatText Format = "text" // one fact a line
)

// ReadProfile reads a profile file: YAML (.yaml, .yml), JSON (.json) or plain text (.txt: one fact a
// line, blank lines and lines starting with # skipped). Format "" picks by extension.
func ReadProfile(path string, format Format) (*Profile, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	if format == FormatAuto {
		switch strings.ToLower(filepath.Ext(path)) {
		case ".yaml", ".yml":
			format = FormatYAML
		case ".json":
			format = FormatJSON
		case ".txt", ".text":
			format = FormatText
		default:
			return nil, inputErr(path, 0, "", "cannot tell the profile format from the extension %q; use .yaml, .json or .txt, or name the format", filepath.Ext(path))
		}
	}
	return ParseProfile(path, data, format)
}

// ParseProfile parses profile data; name is used in errors and as the character of a text profile.
func ParseProfile(name string, data []byte, format Format) (*Profile, error) {
	data = trimBOM(data)
	if !utf8.Valid(data) {
		return nil, inputErr(name, lineOf(data, textpos.FirstInvalidUTF8(data)), "", "invalid UTF-8")
	}
	var p *Profile
	var err error
	switch format {
	case FormatText:
		p, err = parseTextProfile(name, data)
	case FormatJSON:
		// encoding/json first: its syntax errors carry an offset, which yaml's do not for JSON input.
		var v any
		if err := json.Unmarshal(data, &v); err != nil {
			var se *json.SyntaxError
			if errors.As(err, &se) {
				return nil, inputErr(name, lineOf(data, int(se.Offset)), "", "invalid JSON: %v", err)
			}
			return nil, inputErr(name, 0, "", "invalid JSON: %v", err)
		}
		p, err = parseStructuredProfile(name, data)
	case FormatYAML:
		p, err = parseStructuredProfile(name, data)
	default:
		return nil, fmt.Errorf("profile format %q: want yaml, json or text", format)
	}
	if err != nil {
		return nil, err
	}
	p.File = name
	return p, p.validate()
}

func parseTextProfile(name string, data []byte) (*Profile, error) {
	base := filepath.Base(name)
	p := &Profile{Character: strings.TrimSuffix(base, filepath.Ext(base))}
	for i, line := range strings.Split(string(data), "\n") {
		line = strings.TrimSpace(line)
		if line == "" || strings.HasPrefix(line, "#") {
			continue
		}
		p.Facts = append(p.Facts, Fact{ID: fmt.Sprintf("line-%d", i+1), Text: line, Line: i + 1})
	}
	return p, nil
}

// parseStructuredProfile reads YAML or JSON through yaml.Node, which keeps line numbers.
func parseStructuredProfile(name string, data []byte) (*Profile, error) {
	var doc yaml.Node
	if err := yaml.Unmarshal(data, &doc); err != nil {
		return nil, inputErr(name, 0, "", "invalid YAML: %v", err)
	}
	if len(doc.Content) == 0 {
		return nil, inputErr(name, 1, "", "empty profile")
	}
	root := doc.Content[0]
	if root.Kind != yaml.MappingNode {
		return nil, inputErr(name, root.Line, "", "a profile is a mapping with character and facts")
	}
	p := &Profile{}
	var factsNode *yaml.Node
	for i := 0; i+1 < len(root.Content); i += 2 {
		key, val := root.Content[i], root.Content[i+1]
		switch key.Value {
		case "character":
			if val.Kind != yaml.ScalarNode || val.Tag == "!!null" {
				return nil, inputErr(name, val.Line, "character", "must be a string")
			}
			p.Character = strings.TrimSpace(val.Value)
		case "facts":
			factsNode = val
		}
	}
	if p.Character == "" {
		return nil, inputErr(name, root.Line, "character", "missing or empty")
	}
	if factsNode == nil {
		return nil, inputErr(name, root.Line, "facts", "missing")
	}
	if factsNode.Kind != yaml.SequenceNode {
		return nil, inputErr(name, factsNode.Line, "facts", "must be a list of {id, text}")
	}
	for i, fn := range factsNode.Content {
		field := fmt.Sprintf("facts[%d]", i)
		if fn.Kind != yaml.MappingNode {
			return nil, inputErr(name, fn.Line, field, "must be a mapping with id and text")
		}
		f := Fact{Line: fn.Line}
		seen := map[string]bool{}
		for k := 0; k+1 < len(fn.Content); k += 2 {
			key, val := fn.Content[k], fn.Content[k+1]
			seen[key.Value] = true
			switch key.Value {
			case "id":
				if val.Kind != yaml.ScalarNode || val.Tag == "!!null" {
					return nil, inputErr(name, val.Line, field+".id", "must be a string")
				}
				f.ID = strings.TrimSpace(val.Value)
				f.idLine = val.Line
			case "text":
				if val.Kind != yaml.ScalarNode || val.Tag == "!!null" {
					return nil, inputErr(name, val.Line, field+".text", "must be a string")
				}
				f.Text = strings.TrimSpace(val.Value)
				f.textLine = val.Line
			case "tags":
				if val.Kind != yaml.SequenceNode {
					return nil, inputErr(name, val.Line, field+".tags", "must be a list of strings")
				}
				for _, t := range val.Content {
					if t.Kind != yaml.ScalarNode {
						return nil, inputErr(name, t.Line, field+".tags", "must be a list of strings")
					}
					f.Tags = append(f.Tags, t.Value)
				}
			}
		}
		if !seen["id"] {
			return nil, inputErr(name, fn.Line, field+".id", "missing")
		}
		if !seen["text"] {
			return nil, inputErr(name, fn.Line, field+".text", "missing")
		}
		p.Facts = append(p.Facts, f)
	}
	return p, nil
}

// validate checks what every format must satisfy.
func (p *Profile) validate() error {
	if len(p.Facts) == 0 {
		return inputErr(p.File, 0, "facts", "the profile has no facts")
	}
	ids := map[string]int{}
	for i, f := range p.Facts {
		field := fmt.Sprintf("facts[%d]", i)
		if f.ID == "" {
			return inputErr(p.File, cmp.Or(f.idLine, f.Line), field+".id", "empty")
		}
		if f.Text == "" {
			return inputErr(p.File, cmp.Or(f.textLine, f.Line), field+".text", "empty")
		}
		if prev, dup := ids[f.ID]; dup {
			return inputErr(p.File, cmp.Or(f.idLine, f.Line), field+".id", "duplicate id %q (also on line %d)", f.ID, prev)
		}
		ids[f.ID] = cmp.Or(f.idLine, f.Line)
	}
	return nil
}

// FactByID returns the fact with the given id.
func (p *Profile) FactByID(id string) (Fact, bool) {
	for _, f := range p.Facts {
		if f.ID == id {
			return f, true
		}
	}
	return Fact{}, false
}

// trimBOM drops a UTF-8 byte-order mark.
func trimBOM(b []byte) []byte { return bytes.TrimPrefix(b, []byte("\xef\xbb\xbf")) }
