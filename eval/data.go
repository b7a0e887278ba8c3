// Package eval checks the checker: it reads labelled NLI pairs and labelled replies (gainsay's own
// JSON Lines format, and the open sets SNLI, e-SNLI, Breaking NLI and the TaxiNLI subset of MultiNLI),
// runs a model over them and reports classification, calibration, threshold and rationale metrics.
package eval

import (
	"bufio"
	"bytes"
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/internal/jsonl"
	"github.com/gainsay/gainsay/internal/textpos"
)

// Labels in the order every report uses.
var Labels = []string{"contradiction", "entailment", "neutral"}

// LabelIndex returns the index of a label in Labels, or -1.
func LabelIndex(s string) int {
	for i, l := range Labels {
		if l == s {
			return i
		}
	}
	return -1
}

// Item is one labelled pair. Gold, when set, are the byte ranges of the hypothesis words a person (or
// the data's construction) blames for the label.
type Item struct {
	Premise, Hypothesis, Label string
	Gold                       []textpos.Range
	// Source names the row: "file:line" or the data set's own id.
	Source string
}

// Format names an evaluation data format.
type Format string

// The evaluation data formats.
const (
	FormatAuto       Format = ""           // from the path (DetectFormat)
	FormatPairs      Format = "pairs"      // gainsay's JSON Lines: premise, hypothesis, label, optional culprits
	FormatReplies    Format = "replies"    // gainsay's JSON Lines: id, text, label, optional culprits (needs a profile)
	FormatCharacters Format = "characters" // a folder of NAME.yaml profiles beside NAME.jsonl labelled replies
	FormatSNLI       Format = "snli"       // s1.<split>, s2.<split>, labels.<split> (as distributed with e-SNLI)
	FormatESNLI      Format = "esnli"      // e-SNLI CSV with *marked* highlights
	FormatBreaking   Format = "breaking"   // Breaking NLI dataset.jsonl
	FormatTaxiNLI    Format = "taxinli"    // TaxiNLI TSV of MultiNLI dev pairs
)

// Formats lists the formats for help texts.
var Formats = []Format{FormatPairs, FormatReplies, FormatCharacters, FormatSNLI, FormatESNLI, FormatBreaking, FormatTaxiNLI}

// DetectFormat guesses a format from a path: a folder of .yaml profiles is characters, another folder
// or an s1.* file SNLI, .csv e-SNLI, .tsv TaxiNLI, and a JSON Lines file is told by its first object's
// fields.
func DetectFormat(path string) (Format, error) {
	if st, err := os.Stat(path); err == nil && st.IsDir() {
		if m, _ := filepath.Glob(filepath.Join(path, "*.yaml")); len(m) > 0 {
			return FormatCharacters, nil
		}
		return FormatSNLI, nil
	}
	base := filepath.Base(path)
	switch {
	case strings.HasPrefix(base, "s1.") || strings.HasPrefix(base, "s2.") || strings.HasPrefix(base, "labels."):
		return FormatSNLI, nil
	case strings.HasSuffix(base, ".csv"):
		return FormatESNLI, nil
	case strings.HasSuffix(base, ".tsv"):
		return FormatTaxiNLI, nil
	}
	f, err := os.Open(path)
	if err != nil {
		return "", err
	}
	defer f.Close()
	line, err := bufio.NewReader(f).ReadBytes('\n')
	if err != nil && !errors.Is(err, io.EOF) {
		return "", err
	}
	var keys map[string]json.RawMessage
	if json.Unmarshal(bytes.TrimSpace(line), &keys) != nil {
		return "", fmt.Errorf("%s: cannot tell the format; name it (%v)", path, Formats)
	}
	switch {
	case keys["sentence1"] != nil && keys["category"] != nil:
		return FormatBreaking, nil
	case keys["premise"] != nil:
		return FormatPairs, nil
	case keys["text"] != nil:
		return FormatReplies, nil
	}
	return "", fmt.Errorf("%s:1: cannot tell the format from the fields; name it (%v)", path, Formats)
}

func inputErr(file string, line int, field, format string, args ...any) error {
	return &gainsay.InputError{File: file, Line: line, Field: field, Msg: fmt.Sprintf(format, args...)}
}

// ReadPairs reads gainsay's pairs format: one JSON object a line with premise, hypothesis and label
// (contradiction, entailment or neutral), and optionally the gold culprits of the hypothesis, either as
// words ("culprits": ["never"]) or as code-point ranges ("culprit_spans": [[7, 12]]).
func ReadPairs(path string) ([]Item, error) {
	return readJSONLines(path, func(raw []byte, line int) (Item, bool, error) {
		it, err := parsePair(path, line, raw)
		return it, true, err
	})
}

// readJSONLines calls parse on every non-blank line of a JSON Lines file and keeps the items it
// returns with keep set; the first error stops the reading.
func readJSONLines(path string, parse func(raw []byte, line int) (it Item, keep bool, err error)) ([]Item, error) {
	var out []Item
	err := jsonl.Each(path, func(raw []byte, line int) error {
		it, keep, err := parse(raw, line)
		if keep && err == nil {
			out = append(out, it)
		}
		return err
	})
	if err != nil {
		return nil, err
	}
	return out, nil
}

func parsePair(path string, line int, raw []byte) (Item, error) {
	if !utf8.Valid(raw) {
		return Item{}, inputErr(path, line, "", "invalid UTF-8")
	}
	var v struct {
		Premise      *string  `json:"premise"`
		Hypothesis   *string  `json:"hypothesis"`
		Label        *string  `json:"label"`
		Culprits     []string `json:"culprits"`
		CulpritSpans [][2]int `json:"culprit_spans"`
	}
	if err := json.Unmarshal(raw, &v); err != nil {
		return Item{}, inputErr(path, line, "", "not a pair object: %v", err)
	}
	switch {
	case v.Premise == nil:
		return Item{}, inputErr(path, line, "premise", "missing")
	case v.Hypothesis == nil:
		return Item{}, inputErr(path, line, "hypothesis", "missing")
	case v.Label == nil:
		return Item{}, inputErr(path, line, "label", "missing")
	case LabelIndex(*v.Label) < 0:
		return Item{}, inputErr(path, line, "label", "%q is not contradiction, entailment or neutral", *v.Label)
	}
	it := Item{Premise: *v.Premise, Hypothesis: *v.Hypothesis, Label: *v.Label, Source: fmt.Sprintf("%s:%d", path, line)}
	gold, err := goldFrom(it.Hypothesis, v.Culprits, v.CulpritSpans)
	if err != nil {
		return Item{}, inputErr(path, line, "culprit_spans", "%v", err)
	}
	it.Gold = gold
	return it, nil
}

// goldFrom turns culprit words (matched case-insensitively against the text's space-separated words,
// punctuation ignored) or code-point ranges into byte ranges.
func goldFrom(text string, words []string, spans [][2]int) ([]textpos.Range, error) {
	var out []textpos.Range
	if len(words) > 0 {
		want := map[string]bool{}
		for _, w := range words {
			want[normWord(w)] = true
		}
		for _, sp := range spaceWords(text) {
			if want[normWord(text[sp.Start:sp.End])] {
				out = append(out, sp)
			}
		}
	}
	idx := textpos.New(text)
	n := utf8.RuneCountInString(text)
	for _, s := range spans {
		if s[0] < 0 || s[1] > n || s[0] >= s[1] {
			return nil, fmt.Errorf("[%d, %d] is not a range of the hypothesis (%d characters)", s[0], s[1], n)
		}
		out = append(out, textpos.Range{Start: idx.Bytes(s[0]), End: idx.Bytes(s[1])})
	}
	return out, nil
}

func normWord(w string) string {
	return strings.ToLower(strings.TrimFunc(w, func(r rune) bool { return unicode.IsPunct(r) || unicode.IsSpace(r) }))
}

// spaceWords returns the byte ranges of the text's space-separated words.
func spaceWords(text string) []textpos.Range {
	var out []textpos.Range
	start := -1
	for i, r := range text {
		if r == ' ' {
			if start >= 0 {
				out = append(out, textpos.Range{Start: start, End: i})
				start = -1
			}
		} else if start < 0 {
			start = i
		}
	}
	if start >= 0 {
		out = append(out, textpos.Range{Start: start, End: len(text)})
	}
	return out
}

// Detok undoes SNLI's tokenisation as distributed with e-SNLI ("packages . " -> "packages."), the same
// rule as scripts/train/nli_data.py, so that the model sees text as people write it.
func Detok(s string) string {
	s = strings.TrimSpace(s)
	for _, p := range []string{" .", " ,", " !", " ?", " ;", " :", " 's", " n't", " '"} {
		s = strings.ReplaceAll(s, p, p[1:])
	}
	return s
}

// ESNLIRows is how many SNLI dev lines e-SNLI annotates in shared/data (and the built-in model holds out).
const ESNLIRows = 1510

// ReadSNLI reads SNLI as distributed with e-SNLI: the split ("test" or "dev") of the folder dir (or the
// folder of a file named s1.<split>). Rows without a gold label ("-") are skipped. heldOut keeps only
// the rows the built-in model never trained on (all of test; dev lines 1-1,510).
func ReadSNLI(path, split string, heldOut bool) ([]Item, error) {
	dir := path
	if st, err := os.Stat(path); err == nil && !st.IsDir() {
		dir = filepath.Dir(path)
		if split == "" {
			split = strings.TrimPrefix(filepath.Ext(path), ".")
		}
	}
	if split == "" {
		split = "test"
	}
	read := func(name string) ([]string, error) {
		b, err := os.ReadFile(filepath.Join(dir, name+"."+split))
		if err != nil {
			return nil, err
		}
		return strings.Split(strings.TrimRight(string(b), "\n"), "\n"), nil
	}
	s1, err := read("s1")
	if err != nil {
		return nil, err
	}
	s2, err := read("s2")
	if err != nil {
		return nil, err
	}
	labels, err := read("labels")
	if err != nil {
		return nil, err
	}
	if len(s1) != len(s2) || len(s1) != len(labels) {
		return nil, fmt.Errorf("%s: s1, s2 and labels of %s differ in length (%d, %d, %d)", dir, split, len(s1), len(s2), len(labels))
	}
	var out []Item
	for i := range s1 {
		if heldOut && split == "dev" && i >= ESNLIRows {
			break
		}
		y := strings.TrimSpace(labels[i])
		if LabelIndex(y) < 0 {
			continue
		}
		out = append(out, Item{Premise: Detok(s1[i]), Hypothesis: Detok(s2[i]), Label: y, Source: fmt.Sprintf("snli-%s:%d", split, i+1)})
	}
	return out, nil
}

// BreakingHeldOut are the Breaking NLI categories the built-in model never trained on.
var BreakingHeldOut = map[string]bool{
	"antonyms_wordnet": true, "cardinals": true, "colors": true, "drinks": true,
	"nationalities": true, "rooms": true, "vegetables": true,
}

// ReadBreaking reads Breaking NLI's dataset.jsonl. The gold culprit is the hypothesis words that
// differ from the premise (by construction one word or phrase replaced). heldOut keeps only the
// categories in BreakingHeldOut.
func ReadBreaking(path string, heldOut bool) ([]Item, error) {
	return readJSONLines(path, func(raw []byte, line int) (Item, bool, error) {
		var v struct {
			S1       string          `json:"sentence1"`
			S2       string          `json:"sentence2"`
			Label    string          `json:"gold_label"`
			Category string          `json:"category"`
			PairID   json.RawMessage `json:"pairID"`
		}
		if err := json.Unmarshal(raw, &v); err != nil {
			return Item{}, false, inputErr(path, line, "", "not a Breaking NLI row: %v", err)
		}
		if v.S1 == "" || v.S2 == "" {
			return Item{}, false, inputErr(path, line, "sentence1", "missing sentence1 or sentence2")
		}
		if LabelIndex(v.Label) < 0 {
			return Item{}, false, inputErr(path, line, "gold_label", "%q is not contradiction, entailment or neutral", v.Label)
		}
		it := Item{Premise: v.S1, Hypothesis: v.S2, Label: v.Label, Gold: substituted(v.S1, v.S2), Source: "breaking:" + string(v.PairID)}
		return it, !heldOut || BreakingHeldOut[v.Category], nil
	})
}

// substituted returns the hypothesis words between the longest common prefix and suffix of the two
// sentences' space-separated words, compared without case and surrounding punctuation.
func substituted(premise, hypothesis string) []textpos.Range {
	pw, hw := spaceWords(premise), spaceWords(hypothesis)
	eq := func(i, j int) bool {
		return normWord(premise[pw[i].Start:pw[i].End]) == normWord(hypothesis[hw[j].Start:hw[j].End])
	}
	pre := 0
	for pre < len(pw) && pre < len(hw) && eq(pre, pre) {
		pre++
	}
	suf := 0
	for suf < len(pw)-pre && suf < len(hw)-pre && eq(len(pw)-1-suf, len(hw)-1-suf) {
		suf++
	}
	return hw[pre : len(hw)-suf]
}

// MNLIHeldOut is the built-in model's rule for held-out MultiNLI rows: the first 8 hex digits of
// SHA-256(pairID), read as a number, are divisible by 5.
func MNLIHeldOut(pairID string) bool {
	sum := sha256.Sum256([]byte(pairID))
	n, _ := strconv.ParseUint(hex.EncodeToString(sum[:4]), 16, 64)
	return n%5 == 0
}

// unquoteTwice undoes the second layer of CSV quoting that some TaxiNLI fields carry, the same rule as
// scripts/train/nli_data.py.
func unquoteTwice(s string) string {
	s = strings.TrimSpace(s)
	if len(s) >= 2 && s[0] == '"' && s[len(s)-1] == '"' {
		inner := s[1 : len(s)-1]
		if !strings.Contains(strings.ReplaceAll(inner, `""`, ""), `"`) {
			return strings.TrimSpace(strings.ReplaceAll(inner, `""`, `"`))
		}
	}
	return s
}

// ReadTaxiNLI reads the TaxiNLI TSV of MultiNLI dev pairs (columns prem, hyp, label, pairID). heldOut
// keeps only the rows MNLIHeldOut selects.
func ReadTaxiNLI(path string, heldOut bool) ([]Item, error) {
	return readTable(path, '\t', "label", []string{"prem", "hyp", "pairID"}, func(rec []string, col map[string]int, label string) (Item, bool) {
		id := rec[col["pairID"]]
		it := Item{Premise: unquoteTwice(rec[col["prem"]]), Hypothesis: unquoteTwice(rec[col["hyp"]]), Label: label, Source: "mnli:" + id}
		return it, !heldOut || MNLIHeldOut(id)
	})
}

// ReadESNLI reads e-SNLI's CSV (pairID, gold_label, Sentence1, Sentence2, then three annotations with
// Sentence2_marked_k). A hypothesis word is gold when any annotator marked it (*word*); punctuation
// attached to a marked word is not part of the gold range. heldOut changes nothing: the rows shipped in
// shared/data are all held out.
func ReadESNLI(path string) ([]Item, error) {
	return readTable(path, ',', "gold_label", []string{"Sentence1", "Sentence2", "Sentence2_marked_1"}, func(rec []string, col map[string]int, label string) (Item, bool) {
		hyp := rec[col["Sentence2"]]
		gold := map[int]bool{}
		for k := 1; k <= 3; k++ {
			if c, ok := col[fmt.Sprintf("Sentence2_marked_%d", k)]; ok {
				for _, i := range markedWords(rec[c]) {
					gold[i] = true
				}
			}
		}
		var spans []textpos.Range
		for i, w := range spaceWords(hyp) {
			if gold[i] {
				spans = append(spans, trimPunct(hyp, w))
			}
		}
		return Item{Premise: rec[col["Sentence1"]], Hypothesis: hyp, Label: label, Gold: spans, Source: "esnli:" + rec[col["pairID"]]}, true
	})
}

// markedWords returns the positions, among the space-separated words, of the words wrapped in stars.
func markedWords(marked string) []int {
	var out []int
	for i, sp := range spaceWords(marked) {
		w := marked[sp.Start:sp.End]
		if strings.HasPrefix(w, "*") && strings.HasSuffix(w, "*") && len(w) >= 2 {
			out = append(out, i)
		}
	}
	return out
}

func trimPunct(text string, s textpos.Range) textpos.Range {
	s.Start, s.End = textpos.Trim(text, s.Start, s.End, unicode.IsPunct)
	return s
}

// readTable reads a CSV (or TSV) file with a header that has labelCol and need among its columns, checks
// each row's label, and keeps the items row returns with keep set.
func readTable(path string, comma rune, labelCol string, need []string,
	row func(rec []string, col map[string]int, label string) (it Item, keep bool)) ([]Item, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	r := csv.NewReader(f)
	r.Comma = comma
	r.LazyQuotes = true
	header, err := r.Read()
	if err != nil {
		return nil, inputErr(path, 1, "", "no header: %v", err)
	}
	col := map[string]int{}
	for i, h := range header {
		col[h] = i
	}
	for _, n := range append([]string{labelCol}, need...) {
		if _, ok := col[n]; !ok {
			return nil, inputErr(path, 1, n, "column missing")
		}
	}
	var out []Item
	for {
		rec, err := r.Read()
		if errors.Is(err, io.EOF) {
			return out, nil
		}
		line, _ := r.FieldPos(0)
		if err != nil {
			return nil, inputErr(path, line, "", "%v", err)
		}
		label := rec[col[labelCol]]
		if LabelIndex(label) < 0 {
			return nil, inputErr(path, line, labelCol, "%q is not contradiction, entailment or neutral", label)
		}
		if it, keep := row(rec, col, label); keep {
			out = append(out, it)
		}
	}
}
