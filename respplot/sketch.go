package respplot

import (
	"fmt"
	"math"
	"strings"

	"drawerfit/synth"
)

// Sketch characters; ASCII only, so every terminal and log file shows them.
const (
	markNominal = '*'
	markTarget  = '.'
	markLimit   = '-'
	markEdge    = '|'
)

// Sketch returns a compact text picture of the magnitude response of r for a
// terminal: cols plot columns (log frequency, at least 16) by rows lines
// (gain, at least 5), with a gain scale on the left, a frequency scale below
// and a one-line key. The nominal candidate is drawn with '*', the target
// with '.', the specification's limits with '-' and the edges fp and fs with
// '|'. Every line ends without trailing spaces, and the result ends with a
// newline.
func Sketch(r *Response, cols, rows int) (string, error) {
	if err := r.Validate(); err != nil {
		return "", err
	}
	cols = max(cols, 16)
	rows = max(rows, 5)
	lo, hi := r.Range()
	f := LogGrid(lo, hi, cols)
	tg, _, _ := Sample(r.Target, f)
	var ng []float64
	if r.Nominal != nil {
		ng, _, _ = Sample(r.Nominal, f)
	}
	_, bottom := magRange(r, tg, ng)
	// A round number of dB per line, 0 dB on a line of its own, and the top
	// line just above the highest point (a Chebyshev ripple peak).
	peak, _ := extent(tg, ng)
	_, peak = extent([]float64{peak, 0})
	step := niceStep((peak - bottom) / float64(rows-1))
	top := math.Ceil(peak/step-1e-9) * step
	if top == 0 {
		top = 0 // not -0, which would print as "-0 dB"
	}
	zeroRow := int(math.Round(top / step))
	labelEvery := int(math.Ceil(float64(rows) / 5))
	rowOf := func(v float64) int {
		if math.IsNaN(v) {
			return -1
		}
		i := int(math.Round((top - v) / step))
		return min(max(i, 0), rows-1)
	}
	colOf := func(fr float64) int {
		return int(math.Round(math.Log(fr/lo) / math.Log(hi/lo) * float64(cols-1)))
	}
	cells := make([][]rune, rows)
	for i := range cells {
		cells[i] = []rune(strings.Repeat(" ", cols))
	}

	// Limits first, so that curves are drawn over them.
	L := r.Limits
	hp := r.Kind == synth.HighPass
	hline := func(v, fa, fb float64) {
		ri := rowOf(v)
		a, b := max(colOf(fa), 0), min(colOf(fb), cols-1)
		for j := a; j <= b; j++ {
			cells[ri][j] = markLimit
		}
	}
	if L.Ap > 0 {
		if hp {
			hline(-L.Ap, L.Fp, hi)
		} else {
			hline(-L.Ap, lo, L.Fp)
		}
	}
	if L.Fs > 0 && L.As > 0 {
		if hp {
			hline(-L.As, lo, L.Fs)
		} else {
			hline(-L.As, L.Fs, hi)
		}
	}
	for _, e := range []float64{L.Fp, L.Fs} {
		if e > lo && e < hi {
			j := colOf(e)
			for i := range cells {
				if cells[i][j] == ' ' {
					cells[i][j] = markEdge
				}
			}
		}
	}
	curve := func(g []float64, mark rune) {
		prev := -1
		for j, v := range g {
			ri := rowOf(v)
			if ri < 0 {
				prev = -1
				continue
			}
			// Join steep slopes with a vertical run so the curve stays
			// continuous between columns.
			a, b := ri, ri
			if prev >= 0 {
				a, b = min(ri, prev+sign(ri-prev)), max(ri, prev+sign(ri-prev))
			}
			for k := a; k <= b; k++ {
				cells[k][j] = mark
			}
			prev = ri
		}
	}
	curve(tg, markTarget)
	if ng != nil {
		curve(ng, markNominal)
	}

	var sb strings.Builder
	const gutter = 8 // "-100 dB " is the widest gain label
	for i, row := range cells {
		label := ""
		if (i-zeroRow)%labelEvery == 0 {
			label = FormatEng(top-float64(i)*step, "dB", 3)
		}
		line := fmt.Sprintf("%*s|%s", gutter, label+" ", string(row))
		sb.WriteString(strings.TrimRight(line, " "))
		sb.WriteByte('\n')
	}

	// Frequency scale: '+' under each decade, its label centred below.
	axis := []rune(strings.Repeat("-", cols))
	labels := []rune(strings.Repeat(" ", cols+gutter+1))
	next := 0
	for _, t := range (FreqTicks{}).Ticks(lo, hi) {
		if t.Label == "" || math.Abs(math.Log10(t.Value)-math.Round(math.Log10(t.Value))) > 1e-9 {
			continue
		}
		j := colOf(t.Value)
		if j < 0 || j >= cols {
			continue
		}
		axis[j] = '+'
		txt := []rune(t.Label)
		start := gutter + 1 + j - len(txt)/2
		start = max(start, next)
		if start+len(txt) > len(labels) {
			start = len(labels) - len(txt)
		}
		if start < next {
			continue
		}
		copy(labels[start:], txt)
		next = start + len(txt) + 1
	}
	sb.WriteString(strings.Repeat(" ", gutter) + "+" + string(axis) + "\n")
	sb.WriteString(strings.TrimRight(string(labels), " ") + "\n")

	key := []string{}
	if ng != nil {
		key = append(key, "* nominal")
	}
	key = append(key, ". target", "- limits")
	edges := "| fp " + synth.FormatFrequency(L.Fp, 4)
	if L.Fs > 0 {
		edges += ", fs " + synth.FormatFrequency(L.Fs, 4)
	}
	key = append(key, edges)
	sb.WriteString(strings.Repeat(" ", gutter) + " " + strings.Join(key, "  ") + "\n")
	return sb.String(), nil
}

// niceStep returns the smallest of 1, 2, 2.5, 3, 4, 5, 6 or 8 times a power
// of ten that is at least x (x > 0); 6 dB a line matches the 6 dB per octave
// of each pole.
func niceStep(x float64) float64 {
	p := math.Pow(10, math.Floor(math.Log10(x)))
	for _, m := range []float64{1, 2, 2.5, 3, 4, 5, 6, 8, 10} {
		if m*p >= x*(1-1e-12) {
			return m * p
		}
	}
	return 10 * p
}

func sign(x int) int {
	switch {
	case x > 0:
		return 1
	case x < 0:
		return -1
	}
	return 0
}
