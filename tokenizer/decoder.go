package tokenizer

import (
	"encoding/json"
	"fmt"
	"strconv"
	"strings"
	"unicode/utf8"
)

// decoder turns tokens back into text, one step of the reference's decode_chain: each step maps the
// list of token strings to a new list, and the last list is joined.
type decoder interface {
	decodeChain(tokens []string) []string
}

type decoderFunc func([]string) []string

func (f decoderFunc) decodeChain(t []string) []string { return f(t) }

func buildDecoder(raw json.RawMessage, path string) (decoder, error) {
	return build(raw, path, decoder(decoderFunc(func(t []string) []string { return t })), newDecoder)
}

func newDecoder(typ string, raw json.RawMessage, path string) (decoder, error) {
	switch typ {
	case "ByteLevel":
		var c byteLevelConfig
		if err := decodeStrict(raw, &c); err != nil {
			return nil, err
		}
		return decoderFunc(decodeByteLevel), nil
	case "WordPiece":
		var c struct {
			Type    string `json:"type"`
			Prefix  string `json:"prefix"`
			Cleanup bool   `json:"cleanup"`
		}
		if err := decodeStrict(raw, &c); err != nil {
			return nil, err
		}
		return decoderFunc(func(ts []string) []string {
			out := make([]string, len(ts))
			for i, t := range ts {
				if i > 0 && !strings.HasPrefix(t, c.Prefix) {
					t = " " + t
				} else {
					t = strings.Replace(t, c.Prefix, "", 1)
				}
				if c.Cleanup {
					t = cleanup(t)
				}
				out[i] = t
			}
			return out
		}), nil
	case "Metaspace":
		p, err := newMetaspace(raw)
		if err != nil {
			return nil, err
		}
		m := p.(*metaspace)
		return decoderFunc(func(ts []string) []string {
			out := make([]string, len(ts))
			for i, t := range ts {
				t = strings.ReplaceAll(t, string(m.repl), " ")
				if i == 0 && m.prepend != "never" {
					t = strings.TrimPrefix(t, " ")
				}
				out[i] = t
			}
			return out
		}), nil
	case "BPEDecoder":
		var c struct {
			Type   string `json:"type"`
			Suffix string `json:"suffix"`
		}
		if err := decodeStrict(raw, &c); err != nil {
			return nil, err
		}
		return decoderFunc(func(ts []string) []string {
			out := make([]string, len(ts))
			for i, t := range ts {
				repl := " "
				if i == len(ts)-1 {
					repl = ""
				}
				out[i] = strings.ReplaceAll(t, c.Suffix, repl)
			}
			return out
		}), nil
	case "ByteFallback":
		return strict(raw, decoderFunc(decodeByteFallback))
	case "Fuse":
		return strict(raw, decoderFunc(func(ts []string) []string { return []string{strings.Join(ts, "")} }))
	case "Strip":
		var c struct {
			Type    string `json:"type"`
			Content string `json:"content"`
			Start   int    `json:"start"`
			Stop    int    `json:"stop"`
		}
		if err := decodeStrict(raw, &c); err != nil {
			return nil, err
		}
		r, _ := utf8.DecodeRuneInString(c.Content)
		return decoderFunc(func(ts []string) []string {
			out := make([]string, len(ts))
			for i, t := range ts {
				rs := []rune(t)
				a, z := 0, len(rs)
				for k := 0; k < c.Start && a < z && rs[a] == r; k++ {
					a++
				}
				for k := 0; k < c.Stop && z > a && rs[z-1] == r; k++ {
					z--
				}
				out[i] = string(rs[a:z])
			}
			return out
		}), nil
	case "Replace":
		re, content, err := readReplace(raw)
		if err != nil {
			return nil, err
		}
		return decoderFunc(func(ts []string) []string {
			out := make([]string, len(ts))
			for i, t := range ts {
				s, err := re.Replace(t, strings.ReplaceAll(content, "$", "$$"), -1, -1)
				if err != nil {
					s = t
				}
				out[i] = s
			}
			return out
		}), nil
	case "Sequence":
		var c struct {
			Type     string            `json:"type"`
			Decoders []json.RawMessage `json:"decoders"`
		}
		if err := decodeStrict(raw, &c); err != nil {
			return nil, err
		}
		var steps []decoder
		for i, r := range c.Decoders {
			d, err := buildDecoder(r, fmt.Sprintf("%s.decoders[%d]", path, i))
			if err != nil {
				return nil, err
			}
			steps = append(steps, d)
		}
		return decoderFunc(func(ts []string) []string {
			for _, d := range steps {
				ts = d.decodeChain(ts)
			}
			return ts
		}), nil
	}
	return nil, unsupported("decoder type %q", typ)
}

// decodeByteLevel maps byte-level characters back to bytes and reads them as UTF-8 (invalid
// sequences as U+FFFD), all tokens into one string.
func decodeByteLevel(ts []string) []string {
	var buf []byte
	for _, t := range ts {
		for _, r := range t {
			if b, ok := charByte(r); ok {
				buf = append(buf, b)
			} else {
				buf = utf8.AppendRune(buf, r)
			}
		}
	}
	return []string{strings.ToValidUTF8(string(buf), "\uFFFD")}
}

// decodeByteFallback joins runs of <0xNN> tokens into the text their bytes spell (U+FFFD per byte
// where they are not valid UTF-8).
func decodeByteFallback(ts []string) []string {
	var out []string
	var pending []byte
	flush := func() {
		if len(pending) == 0 {
			return
		}
		if utf8.Valid(pending) {
			out = append(out, string(pending))
		} else {
			for range pending {
				out = append(out, "\uFFFD")
			}
		}
		pending = nil
	}
	for _, t := range ts {
		if len(t) == 6 && strings.HasPrefix(t, "<0x") && t[5] == '>' {
			if b, err := strconv.ParseUint(t[3:5], 16, 8); err == nil {
				pending = append(pending, byte(b))
				continue
			}
		}
		flush()
		out = append(out, t)
	}
	flush()
	return out
}

// cleanup is the reference's cleanup of spaces before punctuation and in English contractions.
func cleanup(s string) string {
	for _, r := range [][2]string{{" .", "."}, {" ?", "?"}, {" !", "!"}, {" ,", ","}, {" ' ", "'"},
		{" n't", "n't"}, {" 'm", "'m"}, {" do not", " don't"}, {" 's", "'s"}, {" 've", "'ve"}, {" 're", "'re"}} {
		s = strings.ReplaceAll(s, r[0], r[1])
	}
	return s
}
