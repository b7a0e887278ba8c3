package report

import (
	_ "embed"
	"fmt"
	"html/template"
	"io"
	"strings"
)

//go:embed page.html.tmpl
var pageTemplate string

var page = template.Must(template.New("page").Funcs(template.FuncMap{
	"pct":     func(x float64) string { return fmt.Sprintf("%.1f%%", 100*x) },
	"pts":     func(x float64) string { return fmt.Sprintf("%+.1f points", 100*x) },
	"num":     func(x float64) string { return fmt.Sprintf("%.1f", x) },
	"sub":     func(a, b int) int { return a - b },
	"subf":    func(a, b float64) float64 { return a - b },
	"addf":    func(a, b float64) float64 { return a + b },
	"shorten": shorten,
	"join":    strings.Join,
}).Parse(pageTemplate))

// Render writes the page as HTML.
func Render(w io.Writer, p *Page) error { return page.Execute(w, p) }
