package serve

import (
	"errors"
	"sync"
	"time"

	"github.com/gainsay/gainsay/nli"
)

// Batcher merges the encoded pairs of concurrent callers into shared ONNX Runtime runs: it takes the
// first waiting job, then keeps collecting for at most MaxWait or until MaxBatch pairs are gathered, runs
// them together and hands each caller its own results. It is an nli.Runner.
type Batcher struct {
	model    *nli.Model
	jobs     chan job
	maxBatch int
	maxWait  time.Duration
	done     chan struct{}
	once     sync.Once
	wg       sync.WaitGroup
	runs     chan<- int // for tests: the size of each run, when set
}

type job struct {
	encs []nli.Encoding
	out  chan result
}

type result struct {
	probs []nli.Probs
	err   error
}

// ErrClosed is returned after Close.
var ErrClosed = errors.New("batcher closed")

// NewBatcher starts a batcher. queue bounds the jobs waiting; callers beyond it wait.
func NewBatcher(m *nli.Model, maxBatch int, maxWait time.Duration, queue int) *Batcher {
	b := &Batcher{model: m, jobs: make(chan job, queue), maxBatch: maxBatch, maxWait: maxWait, done: make(chan struct{})}
	b.wg.Add(1)
	go b.loop()
	return b
}

// PredictEncoded runs encs as part of a shared batch.
func (b *Batcher) PredictEncoded(encs []nli.Encoding) ([]nli.Probs, error) {
	if len(encs) == 0 {
		return nil, nil
	}
	j := job{encs: encs, out: make(chan result, 1)}
	select {
	case b.jobs <- j:
	case <-b.done:
		return nil, ErrClosed
	}
	r := <-j.out
	return r.probs, r.err
}

// Close stops the batcher after the jobs already queued are done.
func (b *Batcher) Close() {
	b.stop()
	b.wg.Wait()
}

// stop asks the batcher to stop without waiting for the run in progress.
func (b *Batcher) stop() { b.once.Do(func() { close(b.done) }) }

func (b *Batcher) loop() {
	defer b.wg.Done()
	for {
		var first job
		select {
		case first = <-b.jobs:
		case <-b.done:
			// Finish what is queued, then stop.
			for {
				select {
				case j := <-b.jobs:
					b.run([]job{j})
				default:
					return
				}
			}
		}
		batch := []job{first}
		n := len(first.encs)
		timer := time.NewTimer(b.maxWait)
	collect:
		for n < b.maxBatch {
			select {
			case j := <-b.jobs:
				batch = append(batch, j)
				n += len(j.encs)
			case <-timer.C:
				break collect
			case <-b.done:
				break collect // closing: run what is gathered now
			}
		}
		timer.Stop()
		b.run(batch)
	}
}

func (b *Batcher) run(batch []job) {
	var all []nli.Encoding
	for _, j := range batch {
		all = append(all, j.encs...)
	}
	if b.runs != nil {
		b.runs <- len(all)
	}
	probs, err := b.model.PredictEncoded(all)
	at := 0
	for _, j := range batch {
		if err != nil {
			j.out <- result{err: err}
			continue
		}
		j.out <- result{probs: probs[at : at+len(j.encs)]}
		at += len(j.encs)
	}
}
