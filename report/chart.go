package report

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/gainsay/gainsay/internal/rates"
)

// color is input file i's colour: the Okabe-Ito colours (Okabe and Ito 2008), chosen because they
// stay distinct for the common forms of colour blindness.
func color(i int) string {
	palette := [...]string{"#0072B2", "#D55E00", "#009E73", "#CC79A7", "#56B4E9", "#E69F00", "#000000"}
	return palette[i%len(palette)]
}

// Chart is the per-fact bar chart, laid out in SVG user units.
type Chart struct {
	Width, Height int
	AxisX0        float64 // where bars start
	AxisW         float64 // bar area width
	Max           float64 // rate at the right edge
	Ticks         []Tick
	Rows          []ChartRow
}

// Tick is an axis mark.
type Tick struct {
	X     float64
	Label string
}

// ChartRow is one fact.
type ChartRow struct {
	Label string
	Title string
	Y     float64 // top of the row
	Bars  []Bar
}

// Bar is one file's rate for a fact, with its 95% interval as a whisker.
type Bar struct {
	X, Y, W, H   float64
	Color        string
	Label        string
	LowX, HighX  float64
	MidY         float64
	Title        string
	TextX, TextY float64
}

const (
	labelWidth = 190.0
	barArea    = 430.0
	barHeight  = 16.0
	rowGap     = 12.0
)

// axis picks a round step (1, 2, 2.5, 5, 10, 20 or 25 points) and the axis end: the largest value
// rounded up to a step, with at most 6 steps.
func axis(v float64) (end, step float64) {
	v = math.Max(v, 0.01)
	for _, step = range []float64{0.01, 0.02, 0.025, 0.05, 0.1, 0.2, 0.25} {
		if v/step <= 6+1e-9 {
			break
		}
	}
	end = math.Min(1, math.Ceil(v/step-1e-9)*step)
	return end, step
}

func factChart(p *Page) Chart {
	top := 0.0
	for _, f := range p.Facts {
		for _, r := range f.Rates {
			top = math.Max(top, r.CI.High)
		}
	}
	end, step := axis(top)
	c := Chart{AxisX0: labelWidth, AxisW: barArea, Max: end, Width: int(labelWidth + barArea + 150)}
	scale := func(r float64) float64 { return labelWidth + barArea*r/c.Max }
	for v := 0.0; v <= end+1e-9; v += step {
		c.Ticks = append(c.Ticks, Tick{X: scale(v), Label: tickLabel(v)})
	}
	y := 8.0
	for _, f := range p.Facts {
		row := ChartRow{Label: shorten(f.ID, 28), Title: f.ID + ": " + f.Text, Y: y}
		for i, r := range f.Rates {
			by := y + float64(i)*(barHeight+2)
			b := Bar{X: labelWidth, Y: by, W: barArea * r.Rate / c.Max, H: barHeight, Color: p.Files[i].Color,
				LowX: scale(r.CI.Low), HighX: scale(r.CI.High), MidY: by + barHeight/2,
				Label: fmt.Sprintf("%.1f%% (%d/%d)", 100*r.Rate, r.K, r.N),
				Title: fmt.Sprintf("%s, %s: %.1f%%, 95%% interval %.1f%% to %.1f%%", f.ID, p.Files[i].Name, 100*r.Rate, 100*r.CI.Low, 100*r.CI.High)}
			b.TextX, b.TextY = scale(r.CI.High)+6, by+barHeight-4
			row.Bars = append(row.Bars, b)
		}
		c.Rows = append(c.Rows, row)
		y += float64(len(f.Rates))*(barHeight+2) + rowGap
	}
	c.Height = int(y + 24)
	return c
}

// Trend is the overall rate per file (per checkpoint), as vertical bars with interval whiskers.
type Trend struct {
	Width, Height int
	Base          float64
	Bars          []TrendBar
	Ticks         []Tick // here X holds the y coordinate
}

// TrendBar is one file.
type TrendBar struct {
	X, Y, W, H  float64
	Color       string
	Name, Label string
	LowY, HighY float64
	MidX        float64
	Title       string
}

func trendChart(p *Page) *Trend {
	top := 0.0
	for _, f := range p.Files {
		top = math.Max(top, f.Summary.Overall.CI.High)
	}
	maxV, step := axis(top)
	const plotH, barW, gap, left = 180.0, 56.0, 36.0, 48.0
	base := plotH + 20
	t := &Trend{Base: base, Width: int(left + float64(len(p.Files))*(barW+gap) + gap), Height: int(base + 48)}
	yOf := func(v float64) float64 { return base - plotH*v/maxV }
	for v := 0.0; v <= maxV+1e-9; v += step {
		t.Ticks = append(t.Ticks, Tick{X: yOf(v), Label: tickLabel(v)})
	}
	for i, f := range p.Files {
		r := f.Summary.Overall
		x := left + gap + float64(i)*(barW+gap)
		t.Bars = append(t.Bars, TrendBar{
			X: x, Y: yOf(r.Rate), W: barW, H: base - yOf(r.Rate), Color: f.Color, Name: shorten(f.Name, 14),
			Label: fmt.Sprintf("%.1f%%", 100*r.Rate), LowY: yOf(r.CI.Low), HighY: yOf(r.CI.High), MidX: x + barW/2,
			Title: fmt.Sprintf("%s: %d of %d replies, %.1f%% (95%% interval %.1f%% to %.1f%%)", f.Name, r.K, r.N, 100*r.Rate, 100*r.CI.Low, 100*r.CI.High),
		})
	}
	return t
}

func tickLabel(v float64) string {
	if math.Abs(v*100-math.Round(v*100)) < 1e-6 {
		return fmt.Sprintf("%.0f%%", 100*v)
	}
	return fmt.Sprintf("%.1f%%", 100*v)
}

func shorten(s string, n int) string {
	r := []rune(s)
	if len(r) <= n {
		return s
	}
	return string(r[:n-1]) + "…"
}

// StepChart is the contradiction rate per training step, one line per file, with 95% Wilson
// intervals as whiskers, laid out in SVG user units.
type StepChart struct {
	Width, Height int
	Base, Left    float64
	Ticks         []Tick // X holds the y coordinate
	XTicks        []Tick
	Lines         []StepLine
}

// StepLine is one file's rates by step.
type StepLine struct {
	Color, Name string
	Path        string
	Points      []StepPoint
}

// StepPoint is one step.
type StepPoint struct {
	X, Y, LowY, HighY float64
	Title             string
}

func stepChart(p *Page, steps map[int]map[float64]*stepCount) *StepChart {
	if len(steps) == 0 {
		return nil
	}
	var all []float64
	top := 0.0
	for _, m := range steps {
		for s, c := range m {
			if !slices.Contains(all, s) {
				all = append(all, s)
			}
			top = math.Max(top, rates.NewRate(c.k, c.n).CI.High)
		}
	}
	slices.Sort(all)
	maxV, step := axis(top)
	const plotH, plotW, left = 180.0, 560.0, 48.0
	base := plotH + 16
	c := &StepChart{Width: int(left + plotW + 24), Height: int(base + 40), Base: base, Left: left}
	lo, hi := all[0], all[len(all)-1]
	xOf := func(s float64) float64 {
		if hi == lo {
			return left + plotW/2
		}
		return left + plotW*(s-lo)/(hi-lo)
	}
	yOf := func(v float64) float64 { return base - plotH*v/maxV }
	for v := 0.0; v <= maxV+1e-9; v += step {
		c.Ticks = append(c.Ticks, Tick{X: yOf(v), Label: tickLabel(v)})
	}
	for i, s := range all {
		if len(all) <= 8 || i%((len(all)+7)/8) == 0 || i == len(all)-1 {
			c.XTicks = append(c.XTicks, Tick{X: xOf(s), Label: strconv.FormatFloat(s, 'f', -1, 64)})
		}
	}
	for fi := range p.Files {
		m := steps[fi]
		if len(m) == 0 {
			continue
		}
		l := StepLine{Color: p.Files[fi].Color, Name: p.Files[fi].Name}
		var d strings.Builder
		for _, s := range all {
			sc, ok := m[s]
			if !ok {
				continue
			}
			r := rates.NewRate(sc.k, sc.n)
			pt := StepPoint{X: xOf(s), Y: yOf(r.Rate), LowY: yOf(r.CI.Low), HighY: yOf(r.CI.High),
				Title: fmt.Sprintf("%s, step %s: %d of %d replies, %.1f%% (95%% interval %.1f%% to %.1f%%)",
					l.Name, strconv.FormatFloat(s, 'f', -1, 64), r.K, r.N, 100*r.Rate, 100*r.CI.Low, 100*r.CI.High)}
			if d.Len() == 0 {
				fmt.Fprintf(&d, "M%.1f %.1f", pt.X, pt.Y)
			} else {
				fmt.Fprintf(&d, "L%.1f %.1f", pt.X, pt.Y)
			}
			l.Points = append(l.Points, pt)
		}
		l.Path = d.String()
		c.Lines = append(c.Lines, l)
	}
	return c
}
