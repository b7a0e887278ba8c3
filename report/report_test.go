package report

import (
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"golang.org/x/net/html"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/profile"
)

func build(t *testing.T, files []string, opts Options) (*Page, *html.Node, string) {
	t.Helper()
	prof, err := profile.ReadProfile("testdata/profile.yaml", profile.FormatAuto)
	require.NoError(t, err)
	p, err := Build(prof, files, opts)
	require.NoError(t, err)
	var buf bytes.Buffer
	require.NoError(t, Render(&buf, p))
	doc, err := html.Parse(bytes.NewReader(buf.Bytes()))
	require.NoError(t, err)
	return p, doc, buf.String()
}

// find returns the elements for which match is true, in document order.
func find(n *html.Node, match func(*html.Node) bool) []*html.Node {
	var out []*html.Node
	var walk func(*html.Node)
	walk = func(n *html.Node) {
		if n.Type == html.ElementNode && match(n) {
			out = append(out, n)
		}
		for c := n.FirstChild; c != nil; c = c.NextSibling {
			walk(c)
		}
	}
	walk(n)
	return out
}

func attr(n *html.Node, key string) string {
	for _, a := range n.Attr {
		if a.Key == key {
			return a.Val
		}
	}
	return ""
}

func tag(name string) func(*html.Node) bool { return func(n *html.Node) bool { return n.Data == name } }

func hasClass(c string) func(*html.Node) bool {
	return func(n *html.Node) bool { return strings.Contains(" "+attr(n, "class")+" ", " "+c+" ") }
}

func text(n *html.Node) string {
	var b strings.Builder
	var walk func(*html.Node)
	walk = func(n *html.Node) {
		if n.Type == html.TextNode {
			b.WriteString(n.Data)
		}
		for c := n.FirstChild; c != nil; c = c.NextSibling {
			walk(c)
		}
	}
	walk(n)
	return b.String()
}

func TestStructure(t *testing.T) {
	p, doc, raw := build(t, []string{"testdata/step100.jsonl", "testdata/step200.jsonl"}, Options{})
	// Header: one stat card per file with the exact counts.
	cards := find(doc, hasClass("stat"))
	require.Len(t, cards, 2)
	assert.Contains(t, text(cards[0]), "3 of 4 replies contradict the profile")
	assert.Contains(t, text(cards[1]), "1 of 3 replies contradict the profile")
	assert.Contains(t, text(cards[1]), "1 unreadable")
	assert.Contains(t, text(cards[1]), "change vs first: -41.7 points")
	// The caution is on the page.
	caution := find(doc, func(n *html.Node) bool { return attr(n, "id") == "caution" })
	require.Len(t, caution, 1)
	assert.Contains(t, text(caution[0]), "no substitute for human review")
	// The fact chart: one row per fact, one bar per file in each.
	rows := find(doc, hasClass("fact-row"))
	require.Len(t, rows, 2)
	for _, r := range rows {
		assert.Len(t, find(r, hasClass("bar")), 2)
	}
	assert.NotNil(t, p.Trend, "a per-file chart for several files")
	// Items: every reply, the flagged ones worst first, the others collapsed; one mark per span in the
	// data, its weight printed beside it; the file and line of each.
	items := find(doc, hasClass("flagged"))
	require.Len(t, items, p.Flagged)
	assert.Equal(t, 4, p.Flagged)
	others := find(doc, func(n *html.Node) bool { return hasClass("consistent")(n) || hasClass("unreadable")(n) })
	assert.Len(t, others, p.Others)
	assert.Equal(t, 4, p.Others, "three consistent replies and one unreadable")
	for _, o := range others {
		assert.Len(t, find(o, tag("details")), 1, "collapsed")
	}
	assert.Contains(t, text(items[0]), "step100.jsonl:")
	assert.Len(t, find(doc, hasClass("w")), len(find(doc, tag("mark"))), "a weight beside every mark")
	legend := find(doc, func(n *html.Node) bool { return attr(n, "id") == "legend" })
	require.Len(t, legend, 1)
	assert.Contains(t, text(legend[0]), "share of the pair's contradiction odds")
	assert.Nil(t, p.Steps, "no steps in these records")
	prev := 2.0
	spans := 0
	for i, it := range p.Items {
		assert.LessOrEqual(t, it.Score, prev, "item %d", i)
		prev = it.Score
	}
	for _, name := range []string{"testdata/step100.jsonl", "testdata/step200.jsonl"} {
		f, _ := os.Open(name)
		recs, err := gainsay.ReadAllRecords(f, name)
		f.Close()
		require.NoError(t, err)
		for _, r := range recs {
			for _, fd := range r.Findings {
				spans += len(fd.Spans)
			}
		}
	}
	assert.Len(t, find(doc, tag("mark")), spans+2, "the spans and the legend's two examples")
	// Reply text is escaped, never markup.
	assert.NotContains(t, raw, "<script>alert(1)</script>")
	assert.Empty(t, find(doc, func(n *html.Node) bool { return n.Data == "b" && text(n) == "lit" }))
	// Self-contained: no outside resources.
	for _, n := range find(doc, func(n *html.Node) bool { return attr(n, "src") != "" || attr(n, "href") != "" }) {
		t.Errorf("outside resource: <%s src=%q href=%q>", n.Data, attr(n, "src"), attr(n, "href"))
	}
	assert.NotContains(t, raw, "http://")
	assert.NotContains(t, raw, "https://")
	// The controls are hidden until the script shows them, so the page reads well without it.
	controls := find(doc, func(n *html.Node) bool { return attr(n, "id") == "controls" })
	require.Len(t, controls, 1)
	assert.True(t, hasAttr(controls[0], "hidden"))
	filter := find(controls[0], func(n *html.Node) bool { return attr(n, "id") == "fact-filter" })
	require.Len(t, filter, 1)
	assert.Len(t, find(filter[0], tag("option")), 3, "all facts + one per fact")
}

func hasAttr(n *html.Node, key string) bool {
	for _, a := range n.Attr {
		if a.Key == key {
			return true
		}
	}
	return false
}

func TestCapKeepsChartsExact(t *testing.T) {
	// Many records: the list is capped, the counts are not.
	dir := t.TempDir()
	path := filepath.Join(dir, "big.jsonl")
	var b strings.Builder
	src, err := os.ReadFile("testdata/step100.jsonl")
	require.NoError(t, err)
	lines := strings.Split(strings.TrimSpace(string(src)), "\n")
	n := 0
	for k := 0; k < 2500; k++ {
		for _, l := range lines {
			b.WriteString(strings.Replace(l, `"id":"`, fmt.Sprintf(`"id":"%d-`, k), 1))
			b.WriteByte('\n')
			n++
		}
	}
	require.NoError(t, os.WriteFile(path, []byte(b.String()), 0o644))
	p, doc, _ := build(t, []string{path}, Options{MaxList: 50})
	assert.Equal(t, 7500, p.Flagged)
	assert.Equal(t, 50, p.Shown)
	assert.Len(t, find(doc, hasClass("flagged")), 50)
	note := find(doc, func(n *html.Node) bool { return attr(n, "id") == "cap-note" })
	require.Len(t, note, 1)
	assert.Contains(t, text(note[0]), "Showing the 50 highest-scoring of 7500 flagged replies")
	assert.Equal(t, 7500, p.Files[0].Summary.Overall.K)
	assert.Equal(t, n, p.Files[0].Summary.Overall.N)
	assert.Nil(t, p.Trend, "one file, no per-file chart")
}

func TestAxis(t *testing.T) {
	cases := []struct{ top, end, step float64 }{
		{0.983, 1, 0.2}, {0.3, 0.3, 0.05}, {0.07, 0.08, 0.02}, {0, 0.01, 0.01}, {0.55, 0.6, 0.1},
	}
	for _, c := range cases {
		end, step := axis(c.top)
		assert.InDelta(t, c.step, step, 1e-12, "top %v", c.top)
		assert.InDelta(t, c.end, end, 1e-9, "top %v", c.top)
	}
}

func TestStepChartAndCounts(t *testing.T) {
	p, doc, _ := build(t, []string{"testdata/steps.jsonl"}, Options{})
	require.NotNil(t, p.Steps)
	require.Len(t, p.Steps.Lines, 1)
	assert.Len(t, p.Steps.Lines[0].Points, 4, "one point per step")
	assert.Len(t, find(doc, hasClass("step-point")), 4)
	assert.Contains(t, text(find(doc, hasClass("step-point"))[0]), "step 100: ")
	// The slider's data counts every readable reply and every flagged one.
	var counts []fileCounts
	require.NoError(t, json.Unmarshal([]byte(p.Counts), &counts))
	require.Len(t, counts, 1)
	assert.Equal(t, 20, counts[0].N)
	assert.Len(t, counts[0].Flagged, p.Flagged)
}
