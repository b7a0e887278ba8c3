package tokenizer

import (
	"encoding/json"
	"errors"
	"fmt"
	"unicode"
)

// templateItem is one element of a template: a run of special tokens, or sequence 0 or 1.
type templateItem struct {
	ids    []int // special token ids; empty for a sequence
	seq    int   // 0 first sequence, 1 second; -1 for specials
	typeID int
}

// postProcessor puts special tokens around one or two sequences and may trim token offsets.
type postProcessor struct {
	single, pair []templateItem
	// trim: the reference's ByteLevel trim_offsets (byte-level tokens carry their spaces, "Ġsea"; the
	// offsets drop them). addPrefixSpace keeps the one space the pre-tokenizer added to a first token.
	trim           bool
	addPrefixSpace bool
}

var plainPost = postProcessor{
	single: []templateItem{{seq: 0}},
	pair:   []templateItem{{seq: 0}, {seq: 1, typeID: 1}},
}

func special(id, typeID int) templateItem {
	return templateItem{ids: []int{id}, seq: -1, typeID: typeID}
}

func buildPostProcessor(raw json.RawMessage, path string) (postProcessor, error) {
	if isNull(raw) {
		return plainPost, nil
	}
	typ, err := componentType(raw)
	if err != nil {
		return postProcessor{}, errAt(path, "", err)
	}
	p := plainPost
	if err := p.read(typ, raw, path); err != nil {
		return postProcessor{}, errAt(path, typ, err)
	}
	return p, nil
}

func (p *postProcessor) read(typ string, raw json.RawMessage, path string) error {
	switch typ {
	case "TemplateProcessing":
		return p.readTemplate(raw)
	case "BertProcessing":
		var c struct {
			Type string  `json:"type"`
			Sep  tokenID `json:"sep"`
			Cls  tokenID `json:"cls"`
		}
		if err := decodeStrict(raw, &c); err != nil {
			return err
		}
		p.single = []templateItem{special(c.Cls.id, 0), {seq: 0}, special(c.Sep.id, 0)}
		p.pair = []templateItem{special(c.Cls.id, 0), {seq: 0}, special(c.Sep.id, 0), {seq: 1, typeID: 1}, special(c.Sep.id, 1)}
	case "RobertaProcessing":
		var c struct {
			Type           string  `json:"type"`
			Sep            tokenID `json:"sep"`
			Cls            tokenID `json:"cls"`
			TrimOffsets    *bool   `json:"trim_offsets"`
			AddPrefixSpace *bool   `json:"add_prefix_space"`
		}
		if err := decodeStrict(raw, &c); err != nil {
			return err
		}
		p.single = []templateItem{special(c.Cls.id, 0), {seq: 0}, special(c.Sep.id, 0)}
		p.pair = []templateItem{special(c.Cls.id, 0), {seq: 0}, special(c.Sep.id, 0), special(c.Sep.id, 0), {seq: 1}, special(c.Sep.id, 0)}
		p.trim, p.addPrefixSpace = or(c.TrimOffsets, true), or(c.AddPrefixSpace, true)
	case "ByteLevel":
		var c byteLevelConfig
		if err := decodeStrict(raw, &c); err != nil {
			return err
		}
		p.trim, p.addPrefixSpace = or(c.TrimOffsets, true), or(c.AddPrefixSpace, true)
	case "Sequence":
		var c struct {
			Type       string            `json:"type"`
			Processors []json.RawMessage `json:"processors"`
		}
		if err := decodeStrict(raw, &c); err != nil {
			return err
		}
		for i, r := range c.Processors {
			sub := fmt.Sprintf("%s.processors[%d]", path, i)
			t, err := componentType(r)
			if err != nil {
				return errAt(sub, "", err)
			}
			if err := p.read(t, r, sub); err != nil {
				return errAt(sub, t, err)
			}
		}
	default:
		return unsupported("post_processor type %q", typ)
	}
	return nil
}

// tokenID is ["[SEP]", 102] in BertProcessing and RobertaProcessing.
type tokenID struct {
	token string
	id    int
}

func (t *tokenID) UnmarshalJSON(b []byte) error {
	var pair []any
	if err := json.Unmarshal(b, &pair); err != nil || len(pair) != 2 {
		return errors.New("want [token, id]")
	}
	s, ok1 := pair[0].(string)
	f, ok2 := pair[1].(float64)
	if !ok1 || !ok2 {
		return errors.New("want [token, id]")
	}
	t.token, t.id = s, int(f)
	return nil
}

func (p *postProcessor) readTemplate(raw json.RawMessage) error {
	type piece struct {
		SpecialToken *struct {
			ID     string `json:"id"`
			TypeID int    `json:"type_id"`
		} `json:"SpecialToken"`
		Sequence *struct {
			ID     string `json:"id"`
			TypeID int    `json:"type_id"`
		} `json:"Sequence"`
	}
	var c struct {
		Type          string  `json:"type"`
		Single        []piece `json:"single"`
		Pair          []piece `json:"pair"`
		SpecialTokens map[string]struct {
			ID     string   `json:"id"`
			IDs    []int    `json:"ids"`
			Tokens []string `json:"tokens"`
		} `json:"special_tokens"`
	}
	if err := decodeStrict(raw, &c); err != nil {
		return err
	}
	convert := func(name string, ps []piece) ([]templateItem, error) {
		var out []templateItem
		for i, it := range ps {
			switch {
			case it.SpecialToken != nil:
				st, ok := c.SpecialTokens[it.SpecialToken.ID]
				if !ok {
					return nil, fmt.Errorf("%s[%d]: special token %q has no ids", name, i, it.SpecialToken.ID)
				}
				out = append(out, templateItem{ids: st.IDs, seq: -1, typeID: it.SpecialToken.TypeID})
			case it.Sequence != nil:
				seq := 0
				if it.Sequence.ID == "B" {
					seq = 1
				}
				out = append(out, templateItem{seq: seq, typeID: it.Sequence.TypeID})
			default:
				return nil, fmt.Errorf("%s[%d]: want SpecialToken or Sequence", name, i)
			}
		}
		return out, nil
	}
	var err error
	if p.single, err = convert("single", c.Single); err != nil {
		return err
	}
	if len(c.Pair) == 0 {
		return errors.New("no pair template")
	}
	p.pair, err = convert("pair", c.Pair)
	return err
}

// trimOffsets is the reference's byte_level::process_offsets: a token's leading and trailing spaces
// (the byte-level space character, or white space) leave its offsets, except the one space the
// pre-tokenizer added before the first token.
func (p *postProcessor) trimOffsets(pieces []Piece, tokenOf func(int) string) {
	if !p.trim {
		return
	}
	isSpace := func(r rune) bool { return r == byteChar(' ') || unicode.IsSpace(r) }
	for i := range pieces {
		rs := []rune(tokenOf(pieces[i].ID))
		lead, trail := 0, 0
		for lead < len(rs) && isSpace(rs[lead]) {
			lead++
		}
		for trail < len(rs) && isSpace(rs[len(rs)-1-trail]) {
			trail++
		}
		pc := &pieces[i]
		if lead > 0 {
			if (i == 0 || pc.Start == 0) && p.addPrefixSpace && lead == 1 {
				lead = 0
			}
			pc.Start = min(pc.Start+lead, pc.End)
		}
		if trail > 0 && pc.End >= trail {
			pc.End = max(pc.End-trail, pc.Start)
		}
	}
}
