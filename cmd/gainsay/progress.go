package main

import (
	"fmt"
	"io"
	"os"
	"strings"

	"golang.org/x/term"
)

// progress draws a one-line bar on a terminal; elsewhere it stays silent so that logs stay clean.
type progress struct {
	w     io.Writer
	total int
	on    bool
}

// newProgress draws on w when it is a terminal; set total once known (<= 0: unknown).
func newProgress(w io.Writer) *progress {
	f, ok := w.(*os.File)
	return &progress{w: w, on: ok && term.IsTerminal(int(f.Fd()))}
}

func (p *progress) update(done int) {
	if !p.on {
		return
	}
	if p.total <= 0 {
		fmt.Fprintf(p.w, "\rchecked %d replies", done)
		return
	}
	const width = 30
	n := min(width, done*width/max(1, p.total))
	fmt.Fprintf(p.w, "\r[%s%s] %d/%d replies", strings.Repeat("#", n), strings.Repeat(".", width-n), done, p.total)
}

func (p *progress) done() {
	if p.on {
		fmt.Fprint(p.w, "\r\033[K")
	}
}
