package builtin

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"testing"
	"time"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/nli"
	"github.com/gainsay/gainsay/profile"
)

// BenchmarkCheck runs gainsay check's pipeline on the demo profile (6 facts) and 400 demo replies: about
// 3,400 (fact, sentence) pairs per run, each read both ways, plus the attribution of the flagged ones,
// at batch size 32. It reports the pairs checked per second, the model inputs run per second (readings
// and attribution variants), and the share of wall time spent outside ONNX Runtime's Run (tokenising,
// padding, attribution bookkeeping, JSON). scripts/bench.sh prints them.
func BenchmarkCheck(b *testing.B) {
	m, err := Open(nli.Options{BatchSize: 32})
	if err != nil {
		b.Fatal(err)
	}
	defer m.Close()
	prof, err := profile.ReadProfile("../../testdata/demo/maren.yaml", profile.FormatAuto)
	if err != nil {
		b.Fatal(err)
	}
	texts := []string{
		"Morning, traveller! I have just come back from my swim in the sea.", "I have never seen the sea in my whole life.",
		"My three sisters visit me every summer.", "The lamp up there burns red all night.",
		"Pitch, my black cat, sleeps by the stove. He hates the gulls.", "My white cat sleeps by the stove.",
		"I am a young man of twenty, new to the job.", "The wind is loud tonight. I live in a small flat in the city.",
		"The gulls were loud at dawn, and the tide came in early.", "I have two sisters. Both of them hate boats.",
	}
	var in bytes.Buffer
	for i := 0; i < 400; i++ {
		fmt.Fprintf(&in, "{\"id\": \"r%d\", \"text\": %q}\n", i, texts[i%len(texts)])
	}
	c := &gainsay.Checker{Scorer: &nli.Scorer{Model: m}, Options: gainsay.Options{Model: "builtin"}}
	var wall, run time.Duration
	pairs, rows := 0, int64(0)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		before, rowsBefore, start := m.RunTime(), m.Rows(), time.Now()
		st, err := c.Run(context.Background(), prof, gainsay.NewReplyReader(bytes.NewReader(in.Bytes()), "bench", gainsay.FormatJSONL, 0),
			gainsay.NewRecordWriter(io.Discard), gainsay.RunOptions{})
		if err != nil {
			b.Fatal(err)
		}
		wall += time.Since(start)
		run += m.RunTime() - before
		rows += m.Rows() - rowsBefore
		pairs += st.Pairs
	}
	b.ReportMetric(float64(pairs)/wall.Seconds(), "pairs/s")
	b.ReportMetric(float64(rows)/wall.Seconds(), "inputs/s")
	b.ReportMetric(100*(1-run.Seconds()/wall.Seconds()), "%outside-run")
}
