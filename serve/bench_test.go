package serve

import (
	"encoding/json"
	"net/http/httptest"
	"sync"
	"testing"
	"time"

	"github.com/gainsay/gainsay/models/builtin"
	"github.com/gainsay/gainsay/nli"
)

// The same 64 requests of 8 replies each (demo-like sentences, 2 facts), sent one after another
// through the checker (as sequential gainsay check calls would run them) or by 8 concurrent clients to
// the service. Both report replies per second; the service should be at least as fast.

func benchRequests() []CheckRequest {
	var out []CheckRequest
	for r := 0; r < 64; r++ {
		out = append(out, request(r%8, r, 8))
	}
	return out
}

func openBuiltin(b *testing.B) *nli.Model {
	m, err := builtin.Open(nli.Options{BatchSize: 32})
	if err != nil {
		b.Fatal(err)
	}
	b.Cleanup(func() { m.Close() })
	return m
}

func BenchmarkSequentialCheck(b *testing.B) {
	m := openBuiltin(b)
	reqs := benchRequests()
	start := time.Now()
	replies := 0
	for i := 0; i < b.N; i++ {
		for _, req := range reqs {
			replies += len(direct(b, m, "builtin", req))
		}
	}
	b.ReportMetric(float64(replies)/time.Since(start).Seconds(), "replies/s")
}

func BenchmarkServeConcurrent(b *testing.B) {
	m := openBuiltin(b)
	svc := New(m, "builtin", Config{})
	defer svc.Close()
	ts := httptest.NewServer(svc.Handler())
	defer ts.Close()
	reqs := benchRequests()
	start := time.Now()
	replies := 0
	for i := 0; i < b.N; i++ {
		var wg sync.WaitGroup
		var mu sync.Mutex
		work := make(chan CheckRequest)
		for c := 0; c < 8; c++ {
			wg.Add(1)
			go func() {
				defer wg.Done()
				for req := range work {
					resp, body := post(b, ts.URL, req)
					if resp.StatusCode != 200 {
						b.Errorf("status %d: %s", resp.StatusCode, body)
						return
					}
					var got CheckResponse
					if err := json.Unmarshal(body, &got); err != nil {
						b.Error(err)
						return
					}
					mu.Lock()
					replies += len(got.Records)
					mu.Unlock()
				}
			}()
		}
		for _, r := range reqs {
			work <- r
		}
		close(work)
		wg.Wait()
	}
	b.ReportMetric(float64(replies)/time.Since(start).Seconds(), "replies/s")
}
