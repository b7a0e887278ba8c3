package report

import (
	"bytes"
	"encoding/base64"
	"encoding/json"
	"fmt"
	"io"
	"net"
	"net/http"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/eval"
	"github.com/gainsay/gainsay/nli"
	"github.com/gainsay/gainsay/profile"
)

// TestInBrowser opens a rendered report in headless Chromium through ChromeDriver (Debian packages
// chromium and chromium-driver; `make test` installs them) over the W3C WebDriver protocol: the page
// loads without console errors, the highlights equal the spans in the data, filtering by a fact hides
// the others, and a screenshot goes to $GAINSAY_TEST_OUT (default: out/browser at the repository root).
// Without the browser the test is skipped, unless GAINSAY_REQUIRE_BROWSER=1.
func TestInBrowser(t *testing.T) {
	driver, browser := browserOrSkip(t)
	dir := t.TempDir()
	page := filepath.Join(dir, "report.html")
	prof, err := profile.ReadProfile("testdata/profile.yaml", profile.FormatAuto)
	require.NoError(t, err)
	p, err := Build(prof, []string{"testdata/step100.jsonl", "testdata/step200.jsonl"}, Options{})
	require.NoError(t, err)
	var buf bytes.Buffer
	require.NoError(t, Render(&buf, p))
	require.NoError(t, os.WriteFile(page, buf.Bytes(), 0o644))
	spans := 0
	for _, it := range p.Items {
		for _, f := range it.Findings {
			for _, s := range f.Segments {
				if s.Weight > 0 {
					spans++
				}
			}
		}
	}

	wd := startDriver(t, driver, browser, dir)
	wd.call(t, "POST", "/url", map[string]any{"url": "file://" + page})

	noConsoleErrors(t, wd)
	var marks int
	wd.callInto(t, "POST", "/execute/sync", script("return document.querySelectorAll('#items mark').length"), &marks)
	assert.Equal(t, spans, marks, "one highlight per span")
	var controlsShown bool
	wd.callInto(t, "POST", "/execute/sync", script("return !document.getElementById('controls').hidden"), &controlsShown)
	assert.True(t, controlsShown, "the script shows the filter controls")

	// Filter by the fact "swim" by clicking its option, as a person would.
	opt := wd.element(t, "#fact-filter option[value='swim']")
	wd.call(t, "POST", "/element/"+opt+"/click", map[string]any{})
	var visible []string
	wd.callInto(t, "POST", "/execute/sync", script(`return Array.from(document.querySelectorAll('#items > li')).filter(li => li.offsetParent !== null).map(li => li.getAttribute('data-facts'))`), &visible)
	require.NotEmpty(t, visible)
	for _, f := range visible {
		assert.Contains(t, strings.Fields(f), "swim", "only replies that contradict swim stay visible")
	}
	var total int
	wd.callInto(t, "POST", "/execute/sync", script("return document.querySelectorAll('#items > li').length"), &total)
	withSwim := 0
	for _, it := range p.Items {
		if strings.Contains(" "+it.Facts+" ", " swim ") {
			withSwim++
		}
	}
	assert.Equal(t, withSwim, len(visible))

	// Text search on top: "Zürich" leaves one reply.
	wd.call(t, "POST", "/element/"+wd.element(t, "#fact-filter option[value='']")+"/click", map[string]any{})
	search := wd.element(t, "#text-filter")
	wd.call(t, "POST", "/element/"+search+"/value", map[string]any{"text": "zürich"})
	var n int
	wd.callInto(t, "POST", "/execute/sync", script(`return Array.from(document.querySelectorAll('#items > li')).filter(li => li.offsetParent !== null).length`), &n)
	assert.Equal(t, 1, n)

	screenshot(t, wd, "report.png")
}

// screenshot saves the browser's view to $GAINSAY_TEST_OUT (default: out/browser at the repository root).
func screenshot(t *testing.T, wd *webDriver, name string) {
	var shot string
	wd.callInto(t, "GET", "/screenshot", nil, &shot)
	png, err := base64.StdEncoding.DecodeString(shot)
	require.NoError(t, err)
	out := os.Getenv("GAINSAY_TEST_OUT")
	if out == "" {
		out = filepath.Join("..", "out", "browser")
	}
	require.NoError(t, os.MkdirAll(out, 0o755))
	require.NoError(t, os.WriteFile(filepath.Join(out, name), png, 0o644))
	t.Logf("screenshot: %s (%d bytes)", filepath.Join(out, name), len(png))
}

// TestReviewInBrowser is a lead's review in headless Chromium: the threshold slider recounts, the list
// sorts, the step chart is drawn, two findings are marked "not a contradiction" and exported, and the
// export reads back as labelled replies that gainsay eval scores.
func TestReviewInBrowser(t *testing.T) {
	driver, browser := browserOrSkip(t)
	dir := t.TempDir()
	page := filepath.Join(dir, "review.html")
	prof, err := profile.ReadProfile("testdata/profile.yaml", profile.FormatAuto)
	require.NoError(t, err)
	p, err := Build(prof, []string{"testdata/steps.jsonl"}, Options{})
	require.NoError(t, err)
	var buf bytes.Buffer
	require.NoError(t, Render(&buf, p))
	require.NoError(t, os.WriteFile(page, buf.Bytes(), 0o644))
	wd := startDriver(t, driver, browser, dir)
	wd.call(t, "POST", "/url", map[string]any{"url": "file://" + page})
	noConsoleErrors(t, wd)
	flaggedAt := func() int {
		var n int
		wd.callInto(t, "POST", "/execute/sync", script(`return parseInt(document.querySelector('#threshold-counts tbody tr').getAttribute('data-flagged'), 10)`), &n)
		return n
	}
	assert.Equal(t, p.Flagged, flaggedAt(), "at the run's threshold the slider counts every flagged reply")
	// Move the slider as a person would (keyboard: End takes it to 1.00).
	wd.call(t, "POST", "/element/"+wd.element(t, "#threshold-range")+"/value", map[string]any{"text": "\uE010"})
	var value string
	wd.callInto(t, "POST", "/execute/sync", script(`return document.getElementById('threshold-value').textContent`), &value)
	assert.Equal(t, "1.00", value)
	assert.Less(t, flaggedAt(), p.Flagged, "a higher threshold flags fewer replies")
	var visible int
	wd.callInto(t, "POST", "/execute/sync", script(`return Array.from(document.querySelectorAll('#items > li')).filter(li => li.offsetParent !== null).length`), &visible)
	assert.Equal(t, flaggedAt(), visible, "the list shows the replies flagged at the slider's threshold")
	wd.call(t, "POST", "/element/"+wd.element(t, "#threshold-range")+"/value", map[string]any{"text": "\uE011"}) // Home: back down

	// Sort: lowest score first, over the consistent replies too.
	wd.call(t, "POST", "/element/"+wd.element(t, "#show-consistent")+"/click", map[string]any{})
	wd.call(t, "POST", "/element/"+wd.element(t, "#sort option[value='score-asc']")+"/click", map[string]any{})
	var scores []float64
	wd.callInto(t, "POST", "/execute/sync", script(`return Array.from(document.querySelectorAll('#items > li')).filter(li => li.offsetParent !== null).map(li => parseFloat(li.getAttribute('data-score')))`), &scores)
	require.Len(t, scores, 20, "every reply shown")
	for i := 1; i < len(scores); i++ {
		assert.LessOrEqual(t, scores[i-1], scores[i], "ascending at %d", i)
	}
	// The step chart is drawn, one point per step.
	var points int
	wd.callInto(t, "POST", "/execute/sync", script(`return document.querySelectorAll('#step-chart .step-point circle').length`), &points)
	assert.Equal(t, 4, points)

	// Mark two findings "not a contradiction" and export.
	wd.call(t, "POST", "/element/"+wd.element(t, "#sort option[value='score-desc']")+"/click", map[string]any{})
	var buttons []map[string]string
	wd.callInto(t, "POST", "/elements", map[string]any{"using": "css selector", "value": "#items button.review"}, &buttons)
	require.GreaterOrEqual(t, len(buttons), 2)
	for _, b := range buttons[:2] {
		for _, id := range b {
			wd.call(t, "POST", "/element/"+id+"/click", map[string]any{})
		}
	}
	var marked string
	wd.callInto(t, "POST", "/execute/sync", script(`return document.getElementById('review-count').textContent`), &marked)
	assert.Equal(t, "2 marked", marked)
	var exported string
	wd.callInto(t, "POST", "/execute/sync", script(`return window.gainsayReview()`), &exported)
	require.NotEmpty(t, exported)
	wd.call(t, "POST", "/element/"+wd.element(t, "#export")+"/click", map[string]any{})
	var href string
	wd.callInto(t, "POST", "/execute/sync", script(`return document.getElementById('export-link').href`), &href)
	assert.True(t, strings.HasPrefix(href, "blob:"), "the export is offered as a download")
	screenshot(t, wd, "review.png")

	path := filepath.Join(dir, "review.jsonl")
	require.NoError(t, os.WriteFile(path, []byte(exported), 0o644))
	items, err := eval.ReadLabelledReplies(path)
	require.NoError(t, err, "the export reads as labelled replies")
	require.NotEmpty(t, items)
	for _, it := range items {
		assert.Contains(t, []string{"contradiction", "consistent"}, it.Label)
	}
	m, err := nli.OpenDir("../nli/testdata/tiny-wordpiece", nli.Options{})
	require.NoError(t, err)
	defer m.Close()
	rep, err := eval.Replies(&gainsay.Checker{Scorer: &nli.Scorer{Model: m}}, []eval.Character{{Profile: prof, Replies: items}}, 0)
	require.NoError(t, err, "gainsay eval scores the review")
	assert.Equal(t, len(items), rep.Items)
}

// noConsoleErrors fails the test for errors in the browser's console.
func noConsoleErrors(t *testing.T, wd *webDriver) {
	var logs []struct{ Level, Message string }
	wd.callInto(t, "POST", "/se/log", map[string]any{"type": "browser"}, &logs)
	for _, l := range logs {
		if l.Level == "SEVERE" || l.Level == "ERROR" {
			t.Errorf("console: %s %s", l.Level, l.Message)
		}
	}
}

// browserOrSkip finds ChromeDriver and Chromium, or skips the test (fails it with
// GAINSAY_REQUIRE_BROWSER=1).
func browserOrSkip(t *testing.T) (driver, browser string) {
	driver, browser = lookPath("GAINSAY_CHROMEDRIVER", "chromedriver"), lookPath("GAINSAY_CHROMIUM", "chromium")
	if driver == "" || browser == "" {
		if os.Getenv("GAINSAY_REQUIRE_BROWSER") == "1" {
			t.Fatal("chromium and chromedriver are required (apt-get install chromium chromium-driver)")
		}
		t.Skip("no chromium/chromedriver; `make test` installs them")
	}
	return driver, browser
}

func lookPath(env, name string) string {
	if p := os.Getenv(env); p != "" {
		return p
	}
	p, _ := exec.LookPath(name)
	return p
}

func script(js string) map[string]any { return map[string]any{"script": js, "args": []any{}} }

type webDriver struct {
	base    string
	session string
}

func startDriver(t *testing.T, driver, browser, dir string) *webDriver {
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	require.NoError(t, err)
	port := ln.Addr().(*net.TCPAddr).Port
	ln.Close()
	cmd := exec.Command(driver, fmt.Sprintf("--port=%d", port))
	require.NoError(t, cmd.Start())
	t.Cleanup(func() { cmd.Process.Kill(); cmd.Wait() })
	base := fmt.Sprintf("http://127.0.0.1:%d", port)
	deadline := time.Now().Add(20 * time.Second)
	for {
		resp, err := http.Get(base + "/status")
		if err == nil {
			resp.Body.Close()
			break
		}
		if time.Now().After(deadline) {
			t.Fatalf("chromedriver did not start: %v", err)
		}
		time.Sleep(100 * time.Millisecond)
	}
	caps := map[string]any{"capabilities": map[string]any{"alwaysMatch": map[string]any{
		"browserName": "chrome",
		"goog:chromeOptions": map[string]any{"binary": browser, "args": []string{
			"--headless=new", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
			"--disable-component-update", "--disable-sync", "--no-first-run", "--disable-dev-shm-usage",
			"--user-data-dir=" + filepath.Join(dir, "profile"), "--window-size=1200,1600",
		}},
		"goog:loggingPrefs": map[string]string{"browser": "ALL"},
	}}}
	wd := &webDriver{base: base}
	var created struct {
		SessionID string `json:"sessionId"`
	}
	wd.do(t, "POST", base+"/session", caps, &created)
	require.NotEmpty(t, created.SessionID)
	wd.session = created.SessionID
	t.Cleanup(func() {
		req, _ := http.NewRequest("DELETE", base+"/session/"+wd.session, nil)
		if resp, err := http.DefaultClient.Do(req); err == nil {
			resp.Body.Close()
		}
	})
	return wd
}

func (wd *webDriver) call(t *testing.T, method, path string, body any) {
	wd.callInto(t, method, path, body, nil)
}

func (wd *webDriver) callInto(t *testing.T, method, path string, body, into any) {
	wd.do(t, method, wd.base+"/session/"+wd.session+path, body, into)
}

func (wd *webDriver) element(t *testing.T, css string) string {
	var el map[string]string
	wd.callInto(t, "POST", "/element", map[string]any{"using": "css selector", "value": css}, &el)
	for _, v := range el {
		return v
	}
	t.Fatalf("no element %s", css)
	return ""
}

func (wd *webDriver) do(t *testing.T, method, url string, body, into any) {
	t.Helper()
	var r io.Reader
	if body != nil {
		b, _ := json.Marshal(body)
		r = bytes.NewReader(b)
	}
	req, err := http.NewRequest(method, url, r)
	require.NoError(t, err)
	req.Header.Set("Content-Type", "application/json")
	resp, err := http.DefaultClient.Do(req)
	require.NoError(t, err)
	defer resp.Body.Close()
	raw, _ := io.ReadAll(resp.Body)
	var env struct {
		Value json.RawMessage `json:"value"`
	}
	require.NoError(t, json.Unmarshal(raw, &env), string(raw))
	require.Equal(t, 200, resp.StatusCode, "%s %s: %s", method, url, raw)
	if into != nil {
		require.NoError(t, json.Unmarshal(env.Value, into), string(raw))
	}
}
