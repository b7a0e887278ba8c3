// Package serve is gainsay's long-running scoring service for live training loops: it keeps a model
// loaded, accepts a profile and a batch of replies over HTTP, and answers with the same records as
// gainsay check. Concurrent requests share ONNX Runtime runs through a Batcher; a bounded number of
// requests is admitted at a time and the rest are told the service is busy.
package serve

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"mime"
	"net/http"
	"strings"
	"sync"
	"sync/atomic"
	"time"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/nli"
	"github.com/gainsay/gainsay/profile"
)

// Config bounds the service. Zero values take the defaults in parentheses.
type Config struct {
	MaxBatch     int           // pairs gathered into one shared run (64)
	MaxWait      time.Duration // longest wait for more pairs before a run (5ms)
	MaxInflight  int           // requests admitted at once; more get 503 busy (32)
	MaxBodyBytes int64         // request body limit (4 MiB)
	MaxReplies   int           // replies per request (1024)
	MaxFacts     int           // facts per profile (256)
	MaxChars     int           // characters per reply (gainsay.DefaultMaxReplyChars)
	// Check are the check's options; a request may set its own threshold. Check.Model is set to the
	// service's model name.
	Check  gainsay.Options
	OneWay bool // read pairs only as fact then sentence (see nli.Scorer.OneWay)
	// Embedder, with Check.Relevance, is the relevance gate (nil: every pair is read).
	Embedder gainsay.Embedder
}

func (c *Config) defaults() {
	if c.MaxBatch <= 0 {
		c.MaxBatch = 64
	}
	if c.MaxWait <= 0 {
		c.MaxWait = 5 * time.Millisecond
	}
	if c.MaxInflight <= 0 {
		c.MaxInflight = 32
	}
	if c.MaxBodyBytes <= 0 {
		c.MaxBodyBytes = 4 << 20
	}
	if c.MaxReplies <= 0 {
		c.MaxReplies = 1024
	}
	if c.MaxFacts <= 0 {
		c.MaxFacts = 256
	}
	if c.MaxChars <= 0 {
		c.MaxChars = gainsay.DefaultMaxReplyChars
	}
	if c.Check.Threshold <= 0 {
		c.Check.Threshold = gainsay.DefaultThreshold
	}
}

// Server holds the model, the batcher and the admission slots.
type Server struct {
	cfg      Config
	model    *nli.Model
	name     string
	batcher  *Batcher
	slots    chan struct{}
	inflight atomic.Int64
	served   atomic.Int64
	// abort is closed when shutdown's grace runs out: requests still being worked on are answered
	// 503 at once. handlers counts the requests being answered.
	abort     chan struct{}
	abortOnce sync.Once
	handlers  sync.WaitGroup
}

// New builds a server around a loaded model; name goes into every record.
func New(m *nli.Model, name string, cfg Config) *Server {
	cfg.defaults()
	return &Server{
		cfg: cfg, model: m, name: name,
		batcher: NewBatcher(m, cfg.MaxBatch, cfg.MaxWait, cfg.MaxInflight),
		slots:   make(chan struct{}, cfg.MaxInflight),
		abort:   make(chan struct{}),
	}
}

// Shutdown stops srv as a service that a training loop depends on should stop: no new connections,
// the requests in flight finished for up to grace, then those still running answered 503 (their
// work is dropped) and every connection closed, all within about grace and a second. It closes the
// batcher; it returns srv's own errors only.
func (s *Server) Shutdown(srv *http.Server, grace time.Duration) error {
	ctx, cancel := context.WithTimeout(context.Background(), grace)
	defer cancel()
	err := srv.Shutdown(ctx)
	if !errors.Is(err, context.DeadlineExceeded) {
		s.Close()
		return err
	}
	s.abortOnce.Do(func() { close(s.abort) })
	s.batcher.stop() // the run in progress, if any, is not waited for: the process is ending
	answered := make(chan struct{})
	go func() { s.handlers.Wait(); close(answered) }()
	select {
	case <-answered:
	case <-time.After(time.Second):
	}
	if err := srv.Close(); err != nil && !errors.Is(err, http.ErrServerClosed) {
		return err
	}
	return nil
}

// Close stops the batcher; call it after the HTTP server has shut down.
func (s *Server) Close() { s.batcher.Close() }

// Handler serves POST /v1/check and GET /healthz.
func (s *Server) Handler() http.Handler {
	mux := http.NewServeMux()
	mux.HandleFunc("POST /v1/check", s.check)
	mux.HandleFunc("GET /healthz", s.health)
	return mux
}

// CheckRequest is the body of POST /v1/check.
type CheckRequest struct {
	Profile   json.RawMessage   `json:"profile"`
	Replies   []json.RawMessage `json:"replies"`
	Threshold float64           `json:"threshold,omitempty"`
}

// CheckResponse is its answer: one record per reply, in order.
type CheckResponse struct {
	Model   string           `json:"model"`
	Records []gainsay.Record `json:"records"`
	// Warnings say what is odd but answered, e.g. reply ids used twice.
	Warnings []string `json:"warnings,omitempty"`
}

type errorBody struct {
	Error string `json:"error"`
}

func writeJSON(w http.ResponseWriter, status int, v any) {
	w.Header().Set("Content-Type", "application/json")
	w.WriteHeader(status)
	enc := json.NewEncoder(w)
	enc.SetEscapeHTML(false)
	enc.Encode(v)
}

func fail(w http.ResponseWriter, status int, format string, args ...any) {
	writeJSON(w, status, errorBody{Error: fmt.Sprintf(format, args...)})
}

func (s *Server) health(w http.ResponseWriter, _ *http.Request) {
	writeJSON(w, http.StatusOK, map[string]any{
		"status": "ok", "model": s.name, "inflight": s.inflight.Load(), "max_inflight": s.cfg.MaxInflight,
		"served": s.served.Load(),
	})
}

// DecodeRequest reads the body of POST /v1/check: one JSON object and nothing after it.
func DecodeRequest(body []byte) (CheckRequest, error) {
	var req CheckRequest
	dec := json.NewDecoder(bytes.NewReader(body))
	if err := dec.Decode(&req); err != nil {
		return req, fmt.Errorf("request: not JSON: %v", err)
	}
	if _, err := dec.Token(); !errors.Is(err, io.EOF) {
		return req, errors.New("request: data after the JSON object; send one object")
	}
	return req, nil
}

// isJSON accepts a missing content type, application/json and any +json type.
func isJSON(contentType string) bool {
	if contentType == "" {
		return true
	}
	mt, _, err := mime.ParseMediaType(contentType)
	return err == nil && (mt == "application/json" || strings.HasSuffix(mt, "+json"))
}

func (s *Server) check(w http.ResponseWriter, r *http.Request) {
	s.handlers.Add(1)
	defer s.handlers.Done()
	if ct := r.Header.Get("Content-Type"); !isJSON(ct) {
		fail(w, http.StatusUnsupportedMediaType, "content type %q: send application/json", ct)
		return
	}
	// The body is read, and its size checked, before a work slot is taken: a client that stalls its
	// body holds a connection until the server's read timeout, never a slot.
	body, err := io.ReadAll(http.MaxBytesReader(w, r.Body, s.cfg.MaxBodyBytes))
	if err != nil {
		var tooBig *http.MaxBytesError
		if errors.As(err, &tooBig) {
			fail(w, http.StatusRequestEntityTooLarge, "request body over %d bytes", s.cfg.MaxBodyBytes)
			return
		}
		fail(w, http.StatusBadRequest, "request body: %v", err)
		return
	}
	req, err := DecodeRequest(body)
	if err != nil {
		fail(w, http.StatusBadRequest, "%v", err)
		return
	}
	select {
	case s.slots <- struct{}{}:
	default:
		w.Header().Set("Retry-After", "1")
		fail(w, http.StatusServiceUnavailable, "busy: %d requests in flight; retry shortly", s.cfg.MaxInflight)
		return
	}
	s.inflight.Add(1)
	release := func() {
		s.inflight.Add(-1)
		<-s.slots
	}
	defer release()
	s.work(w, &req)
}

// work answers a decoded request while it holds a slot.
func (s *Server) work(w http.ResponseWriter, req *CheckRequest) {
	if len(req.Profile) == 0 {
		fail(w, http.StatusBadRequest, "request: profile: missing")
		return
	}
	prof, err := profile.ParseProfile("request profile", req.Profile, profile.FormatJSON)
	if err != nil {
		fail(w, http.StatusBadRequest, "%v", err)
		return
	}
	if len(prof.Facts) > s.cfg.MaxFacts {
		fail(w, http.StatusRequestEntityTooLarge, "request profile: %d facts, over the limit of %d", len(prof.Facts), s.cfg.MaxFacts)
		return
	}
	if len(req.Replies) > s.cfg.MaxReplies {
		fail(w, http.StatusRequestEntityTooLarge, "request: %d replies, over the limit of %d", len(req.Replies), s.cfg.MaxReplies)
		return
	}
	opts := s.cfg.Check
	opts.Model = s.name
	if req.Threshold != 0 {
		if req.Threshold < 0 || req.Threshold > 1 {
			fail(w, http.StatusBadRequest, "request: threshold must be in (0, 1]")
			return
		}
		opts.Threshold = req.Threshold
	}
	replies := make([]gainsay.Reply, len(req.Replies))
	for i, raw := range req.Replies {
		var line bytes.Buffer
		json.Compact(&line, raw)
		replies[i] = gainsay.ParseReply(line.Bytes(), fmt.Sprintf("request replies[%d]", i), 0, s.cfg.MaxChars)
		replies[i].Line = i + 1
	}
	checker := &gainsay.Checker{Scorer: &nli.Scorer{Model: s.model, Runner: s.batcher, OneWay: s.cfg.OneWay},
		Embedder: s.cfg.Embedder, Options: opts}
	done := make(chan []gainsay.Record, 1)
	go func() {
		recs, _ := checker.Check(prof, replies)
		done <- recs
	}()
	select {
	case recs := <-done:
		s.served.Add(1)
		writeJSON(w, http.StatusOK, CheckResponse{Model: s.name, Records: recs, Warnings: duplicates(replies)})
	case <-s.abort:
		fail(w, http.StatusServiceUnavailable, "shutting down: the request was not finished in time; send it to another instance")
	}
}

// duplicates warns of reply ids used more than once in a request.
func duplicates(replies []gainsay.Reply) []string {
	seen := map[string]int{}
	var out []string
	for i, r := range replies {
		if r.ID == "" {
			continue
		}
		if first, ok := seen[r.ID]; ok {
			if first >= 0 {
				out = append(out, fmt.Sprintf("id %q is used by replies[%d] and replies[%d]", r.ID, first, i))
				seen[r.ID] = -1
			}
			continue
		}
		seen[r.ID] = i
	}
	return out
}
