package gainsay

import (
	"cmp"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"slices"
	"sync"
	"time"

	"github.com/gainsay/gainsay/internal/sentence"
	"github.com/gainsay/gainsay/internal/textpos"
	"github.com/gainsay/gainsay/nli"
	"github.com/gainsay/gainsay/profile"
	"github.com/gainsay/gainsay/relevance"
)

// DefaultRelevanceTop is the most facts a sentence is read against (the most similar ones), as the
// command line uses it: enough for the handful of facts a sentence is about, few enough that cost stops
// growing with the profile.
const DefaultRelevanceTop = 8

// DefaultAttributionBudget is the model inputs spent on attributing one reply at most: a reply of
// three sentences of 12 words flagged against four facts costs about 280 (23 inputs a finding: 12
// words and 11 two-word phrases), so the budget binds only on long replies that many facts flag.
const DefaultAttributionBudget = 512

// DefaultThreshold is the contradiction probability at which a pair is flagged.
const DefaultThreshold = 0.5

// Options tune a Checker. The zero value takes the defaults.
type Options struct {
	Threshold float64       // 0: DefaultThreshold
	Occlusion nli.Occlusion // "": nli.Delete
	Spans     SpanRule      // zero: DefaultSpanRule
	// Relevance is the least cosine similarity of fact and sentence embeddings for the pair to be
	// read by the NLI model (0: every pair is read); it needs the Checker's Embedder.
	Relevance float64
	// RelevanceTop, when above 0, reads at most this many facts per sentence, the most similar ones
	// above Relevance, so that cost follows the facts a sentence is about rather than the profile size.
	RelevanceTop int
	// AttributionBudget bounds the model inputs spent on attributing one reply's findings (0:
	// DefaultAttributionBudget): findings are attributed from the most probable on while the budget
	// lasts (the first one always); the others keep their verdict, with no spans and unattributed set.
	AttributionBudget int
	// Model names the model in every record (e.g. "builtin@1a2b3c4d").
	Model string
	// RunID goes into every record: an identifier of the model, profile and settings (see RunID).
	RunID string
}

// RunID is a short, stable identifier of what makes a run's records: give it the model's and the
// encoder's SHA-256, the profile and every setting that changes output.
func RunID(parts ...any) string {
	h := sha256.New()
	enc := json.NewEncoder(h)
	for _, p := range parts {
		if err := enc.Encode(p); err != nil {
			fmt.Fprintf(h, "%#v\n", p)
		}
	}
	return hex.EncodeToString(h.Sum(nil))[:16]
}

// Embedder embeds texts as unit vectors (a dot product is a cosine); *relevance.Embedder is one.
type Embedder interface {
	Embed(texts []string) ([][]float32, error)
}

// Checker scores replies against a profile and turns contradictions into penalty spans. It is safe
// for concurrent use when its Scorer's Runner and its Embedder are.
//
// Pairs read both ways (the Scorer's default) are read the second way only where the first reading
// reaches the threshold: the smaller of two readings cannot reach it otherwise, so verdicts are those
// of reading every pair both ways, for about half the work. A pair's probabilities, and so a reply's
// score, are then the smaller reading's for pairs that reach the threshold the first way and the first
// reading's for the others (always below the threshold).
type Checker struct {
	Scorer *nli.Scorer
	// Embedder, with Options.Relevance, skips pairs about different things (nil: none skipped).
	Embedder Embedder
	Options

	mu    sync.Mutex // guards facts
	facts factVectors
}

// factVectors are the embeddings of one profile's facts, made once per profile.
type factVectors struct {
	profile *profile.Profile
	vecs    [][]float32
}

// Stats summarise a run.
type Stats struct {
	Replies, Contradictions, Errors int
	// Pairs scored, pairs skipped by the relevance gate, and pairs attributed (at or above the threshold).
	Pairs, Skipped, Attributed int
	// Duplicates counts reply ids (Run only) that more than one reply used; DuplicateIDs names the
	// first few, with their lines.
	Duplicates   int
	DuplicateIDs []string
	Elapsed                    time.Duration
}

func (c *Checker) threshold() float64 {
	if c.Threshold > 0 {
		return c.Threshold
	}
	return DefaultThreshold
}

func (c *Checker) spanRule() SpanRule {
	if c.Spans == (SpanRule{}) {
		return DefaultSpanRule()
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
			st.Skipped += s1.Skipped
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
	type sent struct {
		reply int
		at    textpos.Range
	}
	var sents []sent
	for i, r := range replies {
		recs[i] = Record{ID: r.ID, Text: r.Text, Context: r.Context, Line: r.Line, Model: c.Model, Run: c.RunID,
			Threshold: Prob(c.threshold()), Extra: r.Extra, Verdict: Consistent}
		if r.Err != nil {
			recs[i].Verdict, recs[i].Error = Failed, r.Err.Error()
			continue
		}
		for _, s := range sentence.Split(r.Text) {
			sents = append(sents, sent{i, s})
		}
	}
	keep, err := c.relevant(p, len(sents), func(k int) string {
		return replies[sents[k].reply].Text[sents[k].at.Start:sents[k].at.End]
	})
	if err != nil {
		return nil, st, fmt.Errorf("relevance: %w", err)
	}
	for fi, f := range p.Facts {
		for k, s := range sents {
			if keep != nil && !keep[k][fi] {
				recs[s.reply].SkippedPairs++
				st.Skipped++
				continue
			}
			refs = append(refs, pairRef{s.reply, fi, s.at})
			pairs = append(pairs, nli.Pair{Premise: f.Text, Hypothesis: replies[s.reply].Text[s.at.Start:s.at.End]})
		}
	}
	st.Pairs = len(pairs)
	if len(pairs) == 0 {
		return recs, st, nil
	}
	scorer := *c.Scorer
	if !scorer.OneWay && scorer.ReverseFrom == 0 {
		scorer.ReverseFrom = c.threshold()
	}
	scored, err := scorer.Score(pairs)
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
	if len(flagged) > 0 {
		rule := c.spanRule()
		aopts := nli.AttributionOptions{Occlusion: c.Occlusion, Phrases: rule.Phrases}
		// Per reply, the most probable findings first, while the budget lasts.
		slices.SortStableFunc(flagged, func(a, b int) int {
			return cmp.Or(cmp.Compare(refs[a].reply, refs[b].reply),
				cmp.Compare(scored[b].Probs.Contradiction, scored[a].Probs.Contradiction))
		})
		budget := cmp.Or(c.AttributionBudget, DefaultAttributionBudget)
		var fp []nli.Scored
		var attributed []int // index into fp of each flagged pair, -1 when over budget
		spent, reply := 0, -1
		for _, k := range flagged {
			if refs[k].reply != reply {
				spent, reply = 0, refs[k].reply
			}
			cost := scorer.AttributionCost(&scored[k], aopts)
			if spent > 0 && spent+cost > budget {
				attributed = append(attributed, -1)
				continue
			}
			spent += cost
			attributed = append(attributed, len(fp))
			fp = append(fp, scored[k])
		}
		st.Attributed = len(fp)
		attrs, err := scorer.Attribute(fp, aopts)
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
				Truncated: scored[k].Truncated,
				order:     ref.fact,
			})
			f := &rec.Findings[len(rec.Findings)-1]
			if a := attributed[j]; a >= 0 {
				f.Spans = rule.spans(rec.Text, idx, ref.sent.Start, attrs[a])
			} else {
				f.Unattributed = true
			}
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

// relevant says, for each of n sentences, which facts of p it is about: keep[k][f] for sentence k
// and fact f (nil: all of them, when there is no gate).
func (c *Checker) relevant(p *profile.Profile, n int, text func(k int) string) ([][]bool, error) {
	if c.Embedder == nil || c.Relevance <= 0 || n == 0 {
		return nil, nil
	}
	facts, err := c.factVectors(p)
	if err != nil {
		return nil, err
	}
	texts := make([]string, n)
	for k := range texts {
		texts[k] = text(k)
	}
	vecs, err := c.Embedder.Embed(texts)
	if err != nil {
		return nil, err
	}
	keep := make([][]bool, n)
	sims := make([]float64, len(facts))
	order := make([]int, len(facts))
	for k, v := range vecs {
		keep[k] = make([]bool, len(facts))
		for f, fv := range facts {
			sims[f], order[f] = relevance.Cosine(v, fv), f
		}
		// The most similar facts first; equal ones in profile order.
		slices.SortStableFunc(order, func(a, b int) int { return cmp.Compare(sims[b], sims[a]) })
		for rank, f := range order {
			if sims[f] >= c.Relevance && (c.RelevanceTop <= 0 || rank < c.RelevanceTop) {
				keep[k][f] = true
			}
		}
	}
	return keep, nil
}

func (c *Checker) factVectors(p *profile.Profile) ([][]float32, error) {
	c.mu.Lock()
	defer c.mu.Unlock()
	if c.facts.profile == p {
		return c.facts.vecs, nil
	}
	texts := make([]string, len(p.Facts))
	for i, f := range p.Facts {
		texts[i] = f.Text
	}
	vecs, err := c.Embedder.Embed(texts)
	if err != nil {
		return nil, err
	}
	c.facts = factVectors{p, vecs}
	return vecs, nil
}

// RunOptions tune Run.
type RunOptions struct {
	// Chunk is how many input lines make one chunk of replies scored together (0: 64): chunk k holds
	// the replies on lines k*Chunk+1 to (k+1)*Chunk. Memory stays bounded by it, records are written a
	// chunk at a time, and since chunks are fixed by line, a resumed run or the shards of a run score
	// exactly the chunks an uninterrupted run does, and write the same bytes.
	Chunk int
	// Shard and Shards, when Shards > 1, check only the chunks whose index modulo Shards is Shard-1:
	// shard Shard of Shards, a deterministic slice that workers agree on without talking.
	Shard, Shards int
	// After skips the replies on lines up to After (an earlier run checked them); Skipped, if set, is
	// called with each reply of this shard that is skipped so, to check it against that run's record.
	After   int
	Skipped func(Reply) error
	// Progress, if set, is called with the number of replies done after each chunk.
	Progress func(done int)
}

// DefaultChunk is the number of lines in a chunk when RunOptions.Chunk is 0.
const DefaultChunk = 64

// ChunkOf is the chunk (0-based) of an input line.
func ChunkOf(line, chunk int) int { return (line - 1) / chunk }

// Run checks every reply of rr and writes one record per reply to w, in input order, chunk by chunk.
// It stops early only for read, write or scoring failures of the whole run, or when ctx is done.
func (c *Checker) Run(ctx context.Context, p *profile.Profile, rr *ReplyReader, w *RecordWriter, opts RunOptions) (Stats, error) {
	start := time.Now()
	chunk := cmp.Or(opts.Chunk, DefaultChunk)
	mine := func(r Reply) bool { return opts.Shards <= 1 || ChunkOf(r.Line, chunk)%opts.Shards == opts.Shard-1 }
	var total Stats
	seen := map[string]int{} // reply id -> its first line
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
		if err := w.Flush(); err != nil {
			return err
		}
		total.Replies += st.Replies
		total.Contradictions += st.Contradictions
		total.Errors += st.Errors
		total.Pairs += st.Pairs
		total.Skipped += st.Skipped
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
		if len(batch) > 0 && ChunkOf(r.Line, chunk) != ChunkOf(batch[0].Line, chunk) {
			if err := flush(); err != nil {
				return total, err
			}
		}
		if r.ID != "" {
			if first, dup := seen[r.ID]; dup {
				if first > 0 {
					total.Duplicates++
					if len(total.DuplicateIDs) < 5 {
						total.DuplicateIDs = append(total.DuplicateIDs, fmt.Sprintf("%q (lines %d and %d)", r.ID, first, r.Line))
					}
					seen[r.ID] = -1 // counted once
				}
			} else {
				seen[r.ID] = r.Line
			}
		}
		switch {
		case !mine(r):
		case r.Line <= opts.After:
			if opts.Skipped != nil {
				if err := opts.Skipped(r); err != nil {
					return total, err
				}
			}
		default:
			batch = append(batch, r)
		}
	}
	if err := flush(); err != nil {
		return total, err
	}
	total.Elapsed = time.Since(start)
	return total, nil
}
