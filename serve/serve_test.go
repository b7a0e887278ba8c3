package serve

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"net"
	"net/http"
	"net/http/httptest"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/nli"
	"github.com/gainsay/gainsay/profile"
)

// The tiny test model of nli (scripts/reference/make_tiny_models.py): exact and fast.
func tinyModel(t testing.TB) *nli.Model {
	m, err := nli.OpenDir("../nli/testdata/tiny-wordpiece", nli.Options{BatchSize: 16})
	require.NoError(t, err, "the ONNX Runtime library is needed: run scripts/install-onnxruntime")
	t.Cleanup(func() { m.Close() })
	return m
}

const profileJSON = `{"character": "maren", "facts": [{"id": "home", "text": "I live in the lighthouse on Gull Point."}, {"id": "swim", "text": "I swim every morning."}]}`

var sentences = []string{
	"I have never seen the sea.", "The lamp is lit.", "I do not swim. Never!", "Gulls again.", "I also fish at dawn.",
}

// request builds a request of n replies whose ids carry the client and request numbers.
func request(client, req, n int) CheckRequest {
	r := CheckRequest{Profile: json.RawMessage(profileJSON)}
	for i := 0; i < n; i++ {
		text := sentences[(client+req+i)%len(sentences)]
		b, _ := json.Marshal(map[string]string{"id": fmt.Sprintf("c%d-r%d-%d", client, req, i), "text": text})
		r.Replies = append(r.Replies, b)
	}
	return r
}

func post(t testing.TB, url string, body any) (*http.Response, []byte) {
	b, err := json.Marshal(body)
	require.NoError(t, err)
	resp, err := http.Post(url+"/v1/check", "application/json", bytes.NewReader(b))
	require.NoError(t, err)
	defer resp.Body.Close()
	out, err := io.ReadAll(resp.Body)
	require.NoError(t, err)
	return resp, out
}

// direct is what gainsay check writes for the same request, one marshalled record per reply.
func direct(t testing.TB, m *nli.Model, name string, req CheckRequest) []string {
	prof, err := profile.ParseProfile("request profile", req.Profile, profile.FormatJSON)
	require.NoError(t, err)
	replies := make([]gainsay.Reply, len(req.Replies))
	for i, raw := range req.Replies {
		replies[i] = gainsay.ParseReply(raw, fmt.Sprintf("request replies[%d]", i), 0, 0)
		replies[i].Line = i + 1
	}
	recs, _ := (&gainsay.Checker{Scorer: &nli.Scorer{Model: m}, Options: gainsay.Options{Model: name}}).Check(prof, replies)
	out := make([]string, len(recs))
	for i := range recs {
		b, err := gainsay.MarshalRecord(&recs[i])
		require.NoError(t, err)
		out[i] = string(b)
	}
	return out
}

func TestLoadAnswersEveryRequestOnceAndLikeCheck(t *testing.T) {
	m := tinyModel(t)
	svc := New(m, "tiny", Config{MaxInflight: 64, MaxWait: 2 * time.Millisecond})
	ts := httptest.NewServer(svc.Handler())
	defer ts.Close()
	defer svc.Close()

	const clients, perClient = 16, 8
	var mu sync.Mutex
	seen := map[string]int{}
	var wg sync.WaitGroup
	for c := 0; c < clients; c++ {
		wg.Add(1)
		go func(c int) {
			defer wg.Done()
			for r := 0; r < perClient; r++ {
				req := request(c, r, 1+(c+r)%5)
				resp, body := post(t, ts.URL, req)
				if !assert.Equal(t, http.StatusOK, resp.StatusCode, string(body)) {
					return
				}
				var got struct {
					Records []json.RawMessage `json:"records"`
				}
				require.NoError(t, json.Unmarshal(body, &got))
				want := direct(t, m, "tiny", req)
				require.Len(t, got.Records, len(want))
				for i := range want {
					var compact bytes.Buffer
					json.Compact(&compact, got.Records[i])
					assert.Equal(t, want[i], compact.String(), "client %d request %d reply %d", c, r, i)
					var id struct{ ID string }
					json.Unmarshal(got.Records[i], &id)
					mu.Lock()
					seen[id.ID]++
					mu.Unlock()
				}
			}
		}(c)
	}
	wg.Wait()
	total := 0
	for c := 0; c < clients; c++ {
		for r := 0; r < perClient; r++ {
			total += 1 + (c+r)%5
		}
	}
	assert.Len(t, seen, total, "every reply answered")
	for id, n := range seen {
		assert.Equal(t, 1, n, "reply %s answered once", id)
	}
}

func TestBatcherMergesConcurrentCallers(t *testing.T) {
	m := tinyModel(t)
	b := NewBatcher(m, 1000, time.Second, 16)
	runs := make(chan int, 16)
	b.runs = runs
	defer b.Close()
	enc, err := m.Encode([]nli.Pair{{Premise: "a", Hypothesis: "I have never seen it."}})
	require.NoError(t, err)
	var wg sync.WaitGroup
	for i := 0; i < 4; i++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			got, err := b.PredictEncoded(enc)
			assert.NoError(t, err)
			assert.Len(t, got, 1)
		}()
	}
	wg.Wait()
	first := <-runs
	assert.Greater(t, first, 1, "the four callers' pairs shared a run")
}

func TestBusyWhenFull(t *testing.T) {
	svc := New(tinyModel(t), "tiny", Config{MaxInflight: 2})
	defer svc.Close()
	ts := httptest.NewServer(svc.Handler())
	defer ts.Close()
	svc.slots <- struct{}{}
	svc.slots <- struct{}{}
	resp, body := post(t, ts.URL, request(0, 0, 1))
	assert.Equal(t, http.StatusServiceUnavailable, resp.StatusCode)
	assert.Equal(t, "1", resp.Header.Get("Retry-After"))
	assert.Contains(t, string(body), "busy")
	<-svc.slots
	resp, _ = post(t, ts.URL, request(0, 0, 1))
	assert.Equal(t, http.StatusOK, resp.StatusCode, "a freed slot admits the next request")
}

func TestRequestErrors(t *testing.T) {
	svc := New(tinyModel(t), "tiny", Config{MaxBodyBytes: 2000, MaxReplies: 3, MaxFacts: 1})
	defer svc.Close()
	ts := httptest.NewServer(svc.Handler())
	defer ts.Close()
	cases := []struct {
		body   string
		status int
		want   string
	}{
		{`{`, 400, "request: not JSON"},
		{`{"replies": []}`, 400, "request: profile: missing"},
		{`{"profile": {"facts": []}, "replies": []}`, 400, "request profile:1: character: missing or empty"},
		{`{"profile": {"character": "m", "facts": [{"id": "a", "text": "x"}, {"id": "b", "text": "y"}]}, "replies": []}`, 413, "2 facts, over the limit of 1"},
		{`{"profile": {"character": "m", "facts": [{"id": "a", "text": "x"}]}, "replies": [{}, {}, {}, {}]}`, 413, "4 replies, over the limit of 3"},
		{`{"profile": {"character": "m", "facts": [{"id": "a", "text": "x"}]}, "replies": [], "threshold": 2}`, 400, "threshold must be in (0, 1]"},
		{`{"profile": {"character": "m", "facts": [{"id": "a", "text": "` + strings.Repeat("x", 3000) + `"}]}, "replies": []}`, 413, "over 2000 bytes"},
	}
	for _, c := range cases {
		resp, err := http.Post(ts.URL+"/v1/check", "application/json", strings.NewReader(c.body))
		require.NoError(t, err)
		b, _ := io.ReadAll(resp.Body)
		resp.Body.Close()
		assert.Equal(t, c.status, resp.StatusCode, c.body)
		assert.Contains(t, string(b), c.want, c.body)
	}
	// A bad reply is an error record, not a failed request.
	r, b := post(t, ts.URL, CheckRequest{Profile: json.RawMessage(`{"character": "m", "facts": [{"id": "a", "text": "x"}]}`),
		Replies: []json.RawMessage{json.RawMessage(`{"id": "bad"}`), json.RawMessage(`{"id": "ok", "text": "Fine."}`)}})
	assert.Equal(t, http.StatusOK, r.StatusCode)
	assert.Contains(t, string(b), `"error":"request replies[0]: text: missing"`)
	assert.Contains(t, string(b), `"id":"ok","verdict":"consistent"`)

	hr, err := http.Get(ts.URL + "/healthz")
	require.NoError(t, err)
	hb, _ := io.ReadAll(hr.Body)
	hr.Body.Close()
	assert.Contains(t, string(hb), `"status":"ok"`)
}

func TestGracefulShutdownFinishesInFlight(t *testing.T) {
	// A long gather window keeps the request in flight while the server shuts down.
	svc := New(tinyModel(t), "tiny", Config{MaxWait: 400 * time.Millisecond, MaxBatch: 1 << 20})
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	require.NoError(t, err)
	srv := &http.Server{Handler: svc.Handler()}
	go srv.Serve(ln)
	url := "http://" + ln.Addr().String()

	// Shut down only once the request is being worked on.
	done := postInFlight(t, svc, url)
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	defer cancel()
	require.NoError(t, srv.Shutdown(ctx))
	svc.Close()
	assert.Equal(t, http.StatusOK, <-done, "the request in flight was answered")
	_, err = http.Post(url+"/v1/check", "application/json", strings.NewReader("{}"))
	assert.Error(t, err, "no new connections after shutdown")
}

// postInFlight sends a request in the background and returns once the service is working on it; the
// channel gets its status (-1: no answer).
func postInFlight(t *testing.T, svc *Server, url string) chan int {
	done := make(chan int, 1)
	go func() {
		resp, err := http.Post(url+"/v1/check", "application/json", bytes.NewReader(mustJSON(request(0, 0, 2))))
		if err != nil {
			done <- -1
			return
		}
		resp.Body.Close()
		done <- resp.StatusCode
	}()
	for deadline := time.Now().Add(10 * time.Second); svc.inflight.Load() == 0; {
		require.True(t, time.Now().Before(deadline), "the request never arrived")
		time.Sleep(5 * time.Millisecond)
	}
	return done
}

func mustJSON(v any) []byte {
	b, err := json.Marshal(v)
	if err != nil {
		panic(err)
	}
	return b
}

func TestTrailingDataAndContentType(t *testing.T) {
	svc := New(tinyModel(t), "tiny", Config{})
	defer svc.Close()
	ts := httptest.NewServer(svc.Handler())
	defer ts.Close()
	one := `{"profile": {"character": "m", "facts": [{"id": "a", "text": "x"}]}, "replies": []}`
	for _, c := range []struct {
		body, ctype string
		status      int
		want        string
	}{
		{one + `{"replies": []}`, "application/json", 400, "data after the JSON object"},
		{one + ` garbage`, "application/json", 400, "data after the JSON object"},
		{one, "text/plain", 415, `text/plain`},
		{one, "application/x-www-form-urlencoded", 415, "send application/json"},
		{one + "\n", "application/json; charset=utf-8", 200, `"records":[]`},
		{one, "", 200, `"records":[]`},
	} {
		req, err := http.NewRequest("POST", ts.URL+"/v1/check", strings.NewReader(c.body))
		require.NoError(t, err)
		if c.ctype != "" {
			req.Header.Set("Content-Type", c.ctype)
		}
		resp, err := http.DefaultClient.Do(req)
		require.NoError(t, err)
		b, _ := io.ReadAll(resp.Body)
		resp.Body.Close()
		assert.Equal(t, c.status, resp.StatusCode, c.body)
		assert.Contains(t, string(b), c.want, c.body)
	}
}

func TestStalledBodiesHoldNoSlot(t *testing.T) {
	// Twice as many clients as slots send their headers and stall their bodies; a well-behaved
	// request is still answered, and the stalled ones are cut off by the read timeout.
	svc := New(tinyModel(t), "tiny", Config{MaxInflight: 2})
	defer svc.Close()
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	require.NoError(t, err)
	srv := &http.Server{Handler: svc.Handler(), ReadTimeout: 2 * time.Second}
	go srv.Serve(ln)
	defer srv.Close()
	var stalled []net.Conn
	for range 4 {
		c, err := net.Dial("tcp", ln.Addr().String())
		require.NoError(t, err)
		fmt.Fprintf(c, "POST /v1/check HTTP/1.1\r\nHost: x\r\nContent-Type: application/json\r\nContent-Length: 1000\r\n\r\n{\"profile\": ")
		stalled = append(stalled, c)
	}
	time.Sleep(100 * time.Millisecond)
	r, b := post(t, "http://"+ln.Addr().String(), request(0, 0, 1))
	assert.Equal(t, http.StatusOK, r.StatusCode, "%s", b)
	for _, c := range stalled {
		c.SetReadDeadline(time.Now().Add(10 * time.Second))
		resp, _ := io.ReadAll(c)
		assert.NotContains(t, string(resp), "200 OK", "a stalled request is never answered as if complete")
		c.Close()
	}
}

func TestShutdownAnswersWhatGraceLeavesRunning(t *testing.T) {
	// A gather window far longer than the grace keeps the request running past it.
	svc := New(tinyModel(t), "tiny", Config{MaxWait: 30 * time.Second, MaxBatch: 1 << 20})
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	require.NoError(t, err)
	srv := &http.Server{Handler: svc.Handler()}
	go srv.Serve(ln)
	done := postInFlight(t, svc, "http://"+ln.Addr().String())
	grace := 300 * time.Millisecond
	start := time.Now()
	require.NoError(t, svc.Shutdown(srv, grace))
	// A bound, not a timing: grace is a limit the service must keep (with a second to close).
	assert.Less(t, time.Since(start), grace+time.Second, "shutdown kept to its grace period")
	assert.Equal(t, http.StatusServiceUnavailable, <-done, "the request still running was answered 503")
}

// The service holds no state between requests: two instances, each with its own model, behind a
// round-robin client answer every request exactly as one instance does.
func TestReplicasAnswerAsOne(t *testing.T) {
	one := New(tinyModel(t), "tiny", Config{})
	defer one.Close()
	a, b := New(tinyModel(t), "tiny", Config{}), New(tinyModel(t), "tiny", Config{})
	defer a.Close()
	defer b.Close()
	single := httptest.NewServer(one.Handler())
	defer single.Close()
	replicas := []*httptest.Server{httptest.NewServer(a.Handler()), httptest.NewServer(b.Handler())}
	for _, r := range replicas {
		defer r.Close()
	}
	for i := range 8 {
		req := request(i, i%3, 4)
		_, want := post(t, single.URL, req)
		_, got := post(t, replicas[i%2].URL, req)
		assert.Equal(t, string(want), string(got), "request %d", i)
	}
}
