package serve

import "testing"

// The request decoder never panics and accepts one JSON object only. Seeds: testdata/fuzz/FuzzDecodeRequest.
func FuzzDecodeRequest(f *testing.F) {
	f.Add([]byte(`{"profile": {"character": "m", "facts": [{"id": "a", "text": "x"}]}, "replies": [{"id": "r", "text": "y"}], "threshold": 0.7}`))
	f.Add([]byte(`{"profile": {}}{"profile": {}}`))
	f.Add([]byte(`[{"profile": 1}]`))
	f.Add([]byte("{\"replies\": [\"\xff\"]}"))
	f.Fuzz(func(t *testing.T, body []byte) {
		req, err := DecodeRequest(body)
		if err != nil {
			return
		}
		if _, err := DecodeRequest(append(body, []byte(` {}`)...)); err == nil {
			t.Fatalf("accepted data after %q (%+v)", body, req)
		}
	})
}
