// Package serve is gainsay's long-running scoring service for live training loops: it keeps a model
// loaded, accepts a profile and a batch of replies over HTTP, and answers with the same records as
// gainsay check. Concurrent requests share ONNX Runtime runs through a Batcher; a bounded number of
// requests is admitted at a time and the rest are told the service is busy.
package serve

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"net/http"
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
}

// New builds a server around a loaded model; name goes into every record.
func New(m *nli.Model, name string, cfg Config) *Server {
	cfg.defaults()
	return &Server{
		cfg: cfg, model: m, name: name,
		batcher: NewBatcher(m, cfg.MaxBatch, cfg.MaxWait, cfg.MaxInflight),
		slots:   make(chan struct{}, cfg.MaxInflight),
	}
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

func (s *Server) check(w http.ResponseWriter, r *http.Request) {
	select {
	case s.slots <- struct{}{}:
	default:
		w.Header().Set("Retry-After", "1")
		fail(w, http.StatusServiceUnavailable, "busy: %d requests in flight; retry shortly", s.cfg.MaxInflight)
		return
	}
	s.inflight.Add(1)
	defer func() {
		s.inflight.Add(-1)
		<-s.slots
	}()

	body := http.MaxBytesReader(w, r.Body, s.cfg.MaxBodyBytes)
	var req CheckRequest
	dec := json.NewDecoder(body)
	if err := dec.Decode(&req); err != nil {
		var tooBig *http.MaxBytesError
		if errors.As(err, &tooBig) {
			fail(w, http.StatusRequestEntityTooLarge, "request body over %d bytes", s.cfg.MaxBodyBytes)
			return
		}
		fail(w, http.StatusBadRequest, "request: not JSON: %v", err)
		return
	}
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
	recs, _ := checker.Check(prof, replies)
	s.served.Add(1)
	writeJSON(w, http.StatusOK, CheckResponse{Model: s.name, Records: recs})
}
