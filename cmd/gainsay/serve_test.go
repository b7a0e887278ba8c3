package main

import (
	"bufio"
	"bytes"
	"net/http"
	"os/exec"
	"regexp"
	"syscall"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// gainsay serve, stopped with SIGTERM while a request runs past --grace: the request is answered 503
// and the process exits 0 within grace and a second.
func TestServeExitsWithinGrace(t *testing.T) {
	bin := gainsayCommand(t)
	c := exec.Command(bin, "serve", "--model", "../../nli/testdata/tiny-wordpiece", "--relevance", "0",
		"--addr", "127.0.0.1:0", "--max-wait", "30s", "--max-batch", "100000", "--grace", "500ms")
	stderr, err := c.StderrPipe()
	require.NoError(t, err)
	require.NoError(t, c.Start())
	defer c.Process.Kill()
	sc := bufio.NewScanner(stderr)
	addr := ""
	for sc.Scan() {
		if m := regexp.MustCompile(`on (http://\S+)`).FindStringSubmatch(sc.Text()); m != nil {
			addr = m[1]
			break
		}
	}
	require.NotEmpty(t, addr, "serve said where it listens")
	go func() {
		for sc.Scan() {
		}
	}()
	status := make(chan int, 1)
	go func() {
		body := `{"profile": {"character": "m", "facts": [{"id": "a", "text": "I swim."}]}, "replies": [{"id": "r", "text": "I never swim."}]}`
		resp, err := http.Post(addr+"/v1/check", "application/json", bytes.NewReader([]byte(body)))
		if err != nil {
			status <- -1
			return
		}
		resp.Body.Close()
		status <- resp.StatusCode
	}()
	time.Sleep(300 * time.Millisecond) // the request is gathering (30 s window)
	start := time.Now()
	require.NoError(t, c.Process.Signal(syscall.SIGTERM))
	err = c.Wait()
	elapsed := time.Since(start)
	require.NoError(t, err, "exit status 0")
	// A bound the service promises, not a timing: grace plus at most a second.
	assert.Less(t, elapsed, 1500*time.Millisecond)
	assert.Equal(t, http.StatusServiceUnavailable, <-status)
}
