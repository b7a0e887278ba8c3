package gainsay

import (
	"cmp"
	"context"
	"errors"
	"fmt"
	"io"
	"slices"
	"time"

	"github.com/gainsay/gainsay/internal/sentence"
	"github.com/gainsay/gainsay/internal/textpos"
	"github.com/gainsay/gainsay/nli"
	"github.com/gainsay/gainsay/profile"
)

// SpanRule says which attributed words become penalty spans: a word whose weight is at least MinWeight
// and at least Relative times the pair's largest word weight.
type SpanRule struct {
	MinWeight float64
	Relative  float64
}

// Culprits marks the words the rule keeps, given every word's weight.
func (r SpanRule) Culprits(weights []float64) []bool {
	top := 0.0
	for _, w := range weights {
		top = max(top, w)
	}
	out := make([]bool, len(weights))
	if top == 0 || top < r.MinWeight {
		return out
	}
	for i, w := range weights {
		out[i] = w >= r.MinWeight && w >= r.Relative*top
	}
	return out
}

// DefaultSpanRule keeps words that carry at least half of the strongest word's effect. The floor only
// excludes words that change nothing measurable: a confident model barely moves when one word goes
// (against "My boat is made of wood", "My boat is made of steel" scores 0.9994, and 0.9946 without
// "steel"), yet that word is the one to blame, so the relative rule does the selecting.
var DefaultSpanRule = SpanRule{MinWeight: 0.001, Relative: 0.5}

// DefaultThreshold is the contradiction probability at which a pair is flagged.
const DefaultThreshold = 0.5

// Options tune a Checker. The zero value takes the defaults.
type Options struct {
	Threshold float64       // 0: DefaultThreshold
	Occlusion nli.Occlusion // "": nli.Delete
	Spans     SpanRule      // zero: DefaultSpanRule
	// Model names the model in every record (e.g. "builtin@1a2b3c4d").
	Model string
}

// Checker scores replies against a profile and turns contradictions into penalty spans. It is safe
// for concurrent use when its Scorer's Runner is.
type Checker struct {
	Scorer *nli.Scorer
	Options
}

// Stats summarise a run.
type Stats struct {
	Replies, Contradictions, Errors int
	// Pairs scored and pairs attributed (at or above the threshold).
	Pairs, Attributed int
	Elapsed           time.Duration
}

func (c *Checker) threshold() float64 {
	if c.Threshold > 0 {
		return c.Threshold
	}
	return DefaultThreshold
}

func (c *Checker) spanRule() SpanRule {
	if c.Spans == (SpanRule{}) {
		return DefaultSpanRule
	}
	return c.Spans
}

// pairRef ties a scored pair to its reply, fact and sentence.
type pairRef struct {
	reply, fact int
	sent        textpos.Range
}

// Check returns one record per reply, in order. Replies with Err set become error records. If the
// scorer fails on the batch, each reply is retried alone, so that one bad reply cannot sink the others;
// a reply that fails alone becomes an error record with the scorer's reason. Check cannot fail.
func (c *Checker) Check(p *profile.Profile, replies []Reply) ([]Record, Stats) {
	start := time.Now()
	recs, st, err := c.check(p, replies)
	if err != nil {
		// One bad reply must not sink the others: score each alone; one that still fails becomes an
		// error record (checking a reply that carries an error needs no scorer, so it cannot fail).
		batchErr := err
		recs, st = make([]Record, len(replies)), Stats{}
		for i, r := range replies {
			var one []Record
			var s1 Stats
			err := batchErr
			if len(replies) > 1 {
				one, s1, err = c.check(p, replies[i:i+1])
			}
			if err != nil {
				r.Err = err
				one, s1, _ = c.check(p, []Reply{r})
			}
			recs[i] = one[0]
			st.Pairs += s1.Pairs
			st.Attributed += s1.Attributed
		}
	}
	st.Replies = len(recs)
	for _, r := range recs {
		switch r.Verdict {
		case Contradiction:
			st.Contradictions++
		case Failed:
			st.Errors++
		}
	}
	st.Elapsed = time.Since(start)
	return recs, st
}

func (c *Checker) check(p *profile.Profile, replies []Reply) ([]Record, Stats, error) {
	var st Stats
	recs := make([]Record, len(replies))
	var refs []pairRef
	var pairs []nli.Pair
	for i, r := range replies {
		recs[i] = Record{ID: r.ID, Text: r.Text, Context: r.Context, Line: r.Line, Model: c.Model,
			Threshold: Prob(c.threshold()), Extra: r.Extra, Verdict: Consistent}
		if r.Err != nil {
			recs[i].Verdict, recs[i].Error = Failed, r.Err.Error()
			continue
		}
		sentences := sentence.Split(r.Text)
		for fi, f := range p.Facts {
			for _, s := range sentences {
				refs = append(refs, pairRef{i, fi, s})
				pairs = append(pairs, nli.Pair{Premise: f.Text, Hypothesis: r.Text[s.Start:s.End]})
			}
		}
	}
	st.Pairs = len(pairs)
	if len(pairs) == 0 {
		return recs, st, nil
	}
	scored, err := c.Scorer.Score(pairs)
	if err != nil {
		return nil, st, fmt.Errorf("scoring: %w", err)
	}
	var flagged []int
	for k, sc := range scored {
		rec := &recs[refs[k].reply]
		rec.Score = max(rec.Score, Prob(sc.Probs.Contradiction))
		if sc.Probs.Contradiction >= c.threshold() {
			flagged = append(flagged, k)
		}
	}
	st.Attributed = len(flagged)
	if len(flagged) > 0 {
		fp := make([]nli.Scored, len(flagged))
		for j, k := range flagged {
			fp[j] = scored[k]
		}
		how := c.Occlusion
		if how == "" {
			how = nli.Delete
		}
		attrs, err := c.Scorer.Attribute(fp, how)
		if err != nil {
			return nil, st, fmt.Errorf("attribution: %w", err)
		}
		indexes := map[int]textpos.Index{}
		for j, k := range flagged {
			ref := refs[k]
			rec := &recs[ref.reply]
			fact := p.Facts[ref.fact]
			idx, ok := indexes[ref.reply]
			if !ok {
				idx = textpos.New(rec.Text)
				indexes[ref.reply] = idx
			}
			rec.Verdict = Contradiction
			rec.Findings = append(rec.Findings, Finding{
				FactID: fact.ID,
				Fact:   fact.Text,
				Sentence: SentenceRef{
					Start: idx.Runes(ref.sent.Start), End: idx.Runes(ref.sent.End),
					ByteStart: ref.sent.Start, ByteEnd: ref.sent.End,
					Text: rec.Text[ref.sent.Start:ref.sent.End],
				},
				Probs:     ProbsOf(scored[k].Probs),
				Spans:     penaltySpans(rec.Text, idx, ref.sent.Start, attrs[j].Words, c.spanRule()),
				Truncated: attrs[j].Truncated,
				order:     ref.fact,
			})
		}
	}
	for i := range recs {
		slices.SortStableFunc(recs[i].Findings, func(a, b Finding) int {
			return cmp.Or(cmp.Compare(b.Probs.Contradiction, a.Probs.Contradiction),
				cmp.Compare(a.order, b.order), cmp.Compare(a.Sentence.Start, b.Sentence.Start))
		})
	}
	return recs, st, nil
}

// penaltySpans turns word weights of one sentence (offsets relative to the sentence at byte offset
// base of text) into merged spans over text, heaviest first.
func penaltySpans(text string, idx textpos.Index, base int, words []nli.WordWeight, rule SpanRule) []Span {
	weights := make([]float64, len(words))
	for i, w := range words {
		weights[i] = w.Weight
	}
	culprits := rule.Culprits(weights)
	var spans []Span
	open := false
	for i, w := range words {
		if !culprits[i] {
			open = false
			continue
		}
		s, e := base+w.Start, base+w.End
		if open {
			last := &spans[len(spans)-1]
			last.ByteEnd = e
			last.Weight = max(last.Weight, Prob(w.Weight))
			continue
		}
		spans = append(spans, Span{ByteStart: s, ByteEnd: e, Weight: Prob(w.Weight)})
		open = true
	}
	for i := range spans {
		sp := &spans[i]
		sp.Start, sp.End = idx.Runes(sp.ByteStart), idx.Runes(sp.ByteEnd)
		sp.Text = text[sp.ByteStart:sp.ByteEnd]
	}
	slices.SortStableFunc(spans, func(a, b Span) int {
		return cmp.Or(cmp.Compare(b.Weight, a.Weight), cmp.Compare(a.Start, b.Start))
	})
	return spans
}

// RunOptions tune Run.
type RunOptions struct {
	// Chunk is how many replies are scored together (0: 64); memory stays bounded by it.
	Chunk int
	// Progress, if set, is called with the number of replies done after each chunk.
	Progress func(done int)
}

// Run checks every reply of rr and writes one record per reply to w, in input order, chunk by chunk.
// It stops early only for read, write or scoring failures of the whole run, or when ctx is done.
func (c *Checker) Run(ctx context.Context, p *profile.Profile, rr *ReplyReader, w *RecordWriter, opts RunOptions) (Stats, error) {
	start := time.Now()
	chunk := opts.Chunk
	if chunk <= 0 {
		chunk = 64
	}
	var total Stats
	batch := make([]Reply, 0, chunk)
	flush := func() error {
		if len(batch) == 0 {
			return nil
		}
		recs, st := c.Check(p, batch)
		for i := range recs {
			if err := w.Write(&recs[i]); err != nil {
				return err
			}
		}
		total.Replies += st.Replies
		total.Contradictions += st.Contradictions
		total.Errors += st.Errors
		total.Pairs += st.Pairs
		total.Attributed += st.Attributed
		batch = batch[:0]
		if opts.Progress != nil {
			opts.Progress(total.Replies)
		}
		return nil
	}
	for {
		if err := ctx.Err(); err != nil {
			return total, err
		}
		r, err := rr.Next()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return total, err
		}
		batch = append(batch, r)
		if len(batch) == chunk {
			if err := flush(); err != nil {
				return total, err
			}
		}
	}
	if err := flush(); err != nil {
		return total, err
	}
	total.Elapsed = time.Since(start)
	return total, w.Flush()
}
