package gainsay

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"

	"github.com/gainsay/gainsay/internal/jsonl"
	"github.com/gainsay/gainsay/nli"
)

// Verdict is the judgement on a whole reply.
type Verdict string

// The verdicts.
const (
	Contradiction Verdict = "contradiction" // at least one pair at or above the threshold
	Consistent    Verdict = "consistent"    // none
	Failed        Verdict = "error"         // the reply could not be read or scored
)

// Prob is a probability or weight, written with at most 6 decimals so that output bytes do not depend
// on the last bits of floating-point arithmetic.
type Prob float64

// MarshalJSON writes p rounded to 6 decimals, in the shortest form.
func (p Prob) MarshalJSON() ([]byte, error) {
	v := math.Round(float64(p)*1e6) / 1e6
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil, fmt.Errorf("probability %v is not a number", float64(p))
	}
	if v == 0 {
		v = 0 // no "-0"
	}
	return strconv.AppendFloat(nil, v, 'f', -1, 64), nil
}

// Probs are a pair's NLI probabilities in a record.
type Probs struct {
	Contradiction Prob `json:"contradiction"`
	Entailment    Prob `json:"entailment"`
	Neutral       Prob `json:"neutral"`
}

// ProbsOf is p as written in records.
func ProbsOf(p nli.Probs) Probs {
	return Probs{Prob(p.Contradiction), Prob(p.Entailment), Prob(p.Neutral)}
}

// Record is the output for one input reply: the verdict, the highest contradiction probability over
// its (fact, sentence) pairs, and a finding for every pair at or above the threshold.
type Record struct {
	ID       string    `json:"id"`
	Verdict  Verdict   `json:"verdict"`
	Score    Prob      `json:"score"`
	Findings []Finding `json:"findings"`
	Error    string    `json:"error,omitempty"`
	// Text is the reply itself: offsets refer to it, and align and report need it.
	Text    string `json:"text"`
	Context string `json:"context,omitempty"`
	// Line is the reply's line in its input file.
	Line      int    `json:"line"`
	Model     string `json:"model,omitempty"`
	Threshold Prob   `json:"threshold"`
	// SkippedPairs counts the (fact, sentence) pairs the relevance gate kept from the NLI model.
	SkippedPairs int `json:"skipped_pairs,omitempty"`
	// Run identifies the model, profile and settings that made the record (Options.RunID), so that
	// a resumed run or the shards of one can be checked to belong together.
	Run string `json:"run,omitempty"`
	// Extra carries the input fields gainsay does not know, unchanged.
	Extra map[string]json.RawMessage `json:"extra,omitempty"`
}

// Finding is one (fact, sentence) pair judged a contradiction.
type Finding struct {
	FactID   string      `json:"fact_id"`
	Fact     string      `json:"fact"`
	Sentence SentenceRef `json:"sentence"`
	Probs    Probs       `json:"probs"`
	// Spans are the words that drive the contradiction, heaviest first.
	Spans []Span `json:"spans"`
	// Truncated: the pair was longer than the model takes and was cut.
	Truncated bool `json:"truncated,omitempty"`
	// Unattributed: the reply's attribution budget was spent on more probable findings, so this one
	// has no spans (Options.AttributionBudget).
	Unattributed bool `json:"unattributed,omitempty"`

	order int // the fact's place in the profile, for a stable order of findings
}

// SentenceRef is a sentence of the reply. Start and End count code points (Python str indexes, end
// exclusive); ByteStart and ByteEnd count UTF-8 bytes.
type SentenceRef struct {
	Start     int    `json:"start"`
	End       int    `json:"end"`
	ByteStart int    `json:"byte_start"`
	ByteEnd   int    `json:"byte_end"`
	Text      string `json:"text"`
}

// Span is a penalty span: a run of culprit words in the reply and its weight, the largest drop in
// contradiction probability when one of its words is left out. Offsets as in SentenceRef.
type Span struct {
	Start     int    `json:"start"`
	End       int    `json:"end"`
	ByteStart int    `json:"byte_start"`
	ByteEnd   int    `json:"byte_end"`
	Text      string `json:"text"`
	Weight    Prob   `json:"weight"`
}

// RecordWriter writes records as JSON Lines. Records are held until Flush, which hands them to the
// underlying writer in one Write: a file killed mid-run then holds whole lines only.
type RecordWriter struct {
	w   io.Writer
	buf bytes.Buffer
}

// NewRecordWriter writes to w; call Flush after each batch of records and at the end.
func NewRecordWriter(w io.Writer) *RecordWriter { return &RecordWriter{w: w} }

// Write adds one record as one line.
func (rw *RecordWriter) Write(r *Record) error {
	b, err := MarshalRecord(r)
	if err != nil {
		return err
	}
	rw.buf.Write(b)
	rw.buf.WriteByte('\n')
	return nil
}

// Flush writes the records added since the last Flush in one Write.
func (rw *RecordWriter) Flush() error {
	if rw.buf.Len() == 0 {
		return nil
	}
	_, err := rw.w.Write(rw.buf.Bytes())
	rw.buf.Reset()
	return err
}

// MarshalJSON writes empty findings and spans as [] rather than null, so that consumers can iterate
// without checks, and the score of an error record as null: a reply that was not checked has no
// score, and 0 would read as consistent.
func (r Record) MarshalJSON() ([]byte, error) {
	type plain Record // without this method
	p := plain(r)
	p.Findings = make([]Finding, len(r.Findings))
	for i, f := range r.Findings {
		if f.Spans == nil {
			f.Spans = []Span{}
		}
		p.Findings[i] = f
	}
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	if r.Verdict == Failed {
		p.Score = 0
	}
	if err := enc.Encode(p); err != nil {
		return nil, err
	}
	out := bytes.TrimRight(buf.Bytes(), "\n")
	if r.Verdict == Failed {
		// The fields come in their declared order: id, verdict, score.
		id, _ := json.Marshal(r.ID)
		zero := append(append([]byte(`{"id":`), id...), `,"verdict":"error","score":0,`...)
		if bytes.HasPrefix(out, zero) {
			out = append(append(zero[:len(zero)-2:len(zero)-2], "null,"...), out[len(zero):]...)
		}
	}
	return out, nil
}

// MarshalRecord encodes a record as one line without HTML escaping.
func MarshalRecord(r *Record) ([]byte, error) {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(r); err != nil {
		return nil, err
	}
	return bytes.TrimRight(buf.Bytes(), "\n"), nil
}

// RecordReader reads records written by gainsay check.
type RecordReader struct {
	s    *jsonl.Scanner
	name string
}

// NewRecordReader reads JSON Lines records from r; name is used in errors.
func NewRecordReader(r io.Reader, name string) *RecordReader {
	return &RecordReader{s: jsonl.NewScanner(r), name: name}
}

// Next returns the next record or io.EOF. A line that is not a record is an *InputError.
func (rr *RecordReader) Next() (Record, error) {
	raw, line, err := rr.s.Next()
	if errors.Is(err, io.EOF) {
		return Record{}, io.EOF
	}
	if err != nil {
		return Record{}, fmt.Errorf("%s: %w", rr.name, err)
	}
	var rec Record
	if err := json.Unmarshal(raw, &rec); err != nil {
		return Record{}, inputErr(rr.name, line, "", "not a gainsay record: %v", err)
	}
	switch rec.Verdict {
	case Contradiction, Consistent, Failed:
	case "":
		return Record{}, inputErr(rr.name, line, "verdict", "missing (is this the output of gainsay check?)")
	default:
		return Record{}, inputErr(rr.name, line, "verdict", "%q is not contradiction, consistent or error", rec.Verdict)
	}
	return rec, nil
}

// ReadAllRecords reads every record of r.
func ReadAllRecords(r io.Reader, name string) ([]Record, error) {
	rr := NewRecordReader(r, name)
	var out []Record
	for {
		rec, err := rr.Next()
		if errors.Is(err, io.EOF) {
			return out, nil
		}
		if err != nil {
			return nil, err
		}
		out = append(out, rec)
	}
}
