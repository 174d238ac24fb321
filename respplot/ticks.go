package respplot

import (
	"image/color"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/plot"

	"drawerfit/synth"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// FreqTicks marks a logarithmic frequency axis with engineering labels
// (100 Hz, 1 kHz, 10 kHz) at every decade and minor marks at 2..9 times
// each decade. Over less than two and a half decades it also labels 2 and 5
// times each decade, and over less than one decade every mark.
type FreqTicks struct{}

// Ticks implements plot.Ticker for min < max, both positive.
func (FreqTicks) Ticks(min, max float64) []plot.Tick {
	if !(min > 0) || !(max > min) {
		return nil
	}
	span := math.Log10(max / min)
	labelled := func(m int) bool {
		switch {
		case span >= 2.5:
			return m == 1
		case span >= 1:
			return m == 1 || m == 2 || m == 5
		}
		return true
	}
	var ticks []plot.Tick
	for e := int(math.Floor(math.Log10(min))); e <= int(math.Ceil(math.Log10(max))); e++ {
		dec := math.Pow(10, float64(e))
		for m := 1; m <= 9; m++ {
			v := float64(m) * dec
			// Tolerate rounding at the ends so a range of exactly 100 Hz to
			// 10 kHz keeps its end labels.
			if v < min*(1-1e-9) || v > max*(1+1e-9) {
				continue
			}
			t := plot.Tick{Value: v}
			if labelled(m) {
				t.Label = synth.FormatFrequency(v, 3)
			}
			ticks = append(ticks, t)
		}
	}
	return ticks
}

// DegreeTicks marks a phase axis at multiples of 45°, 90° or 180°,
// whichever gives at most eight labels.
type DegreeTicks struct{}

// Ticks implements plot.Ticker.
func (DegreeTicks) Ticks(min, max float64) []plot.Tick {
	step := 45.0
	for (max-min)/step > 8 {
		step *= 2
	}
	var ticks []plot.Tick
	for v := math.Ceil(min/step) * step; v <= max+1e-9; v += step {
		ticks = append(ticks, plot.Tick{Value: v, Label: plain(v, step)})
	}
	return ticks
}

// StepTicks marks a linear axis at a round step (1, 2 or 5 times a power
// of ten) giving four to ten labels, with a minor mark halfway, and labels
// without needless decimals.
type StepTicks struct{}

// Ticks implements plot.Ticker.
func (StepTicks) Ticks(min, max float64) []plot.Tick {
	if !(max > min) {
		return nil
	}
	step := math.Pow(10, math.Floor(math.Log10((max-min)/4)))
	for _, m := range []float64{1, 2, 5, 10} {
		if (max-min)/(m*step) <= 10 {
			step *= m
			break
		}
	}
	var ticks []plot.Tick
	half := step / 2
	for v := math.Ceil(min/half) * half; v <= max+1e-9*step; v += half {
		t := plot.Tick{Value: v}
		if r := math.Abs(math.Remainder(v, step)); r < 1e-9*step {
			if math.Abs(v) < 1e-9*step {
				v = 0
			}
			t.Value, t.Label = v, plain(v, step)
		}
		ticks = append(ticks, t)
	}
	return ticks
}

// logGrid draws light grid lines: at every labelled tick of both axes and,
// fainter, at the minor frequency ticks, as on log-scaled graph paper.
type logGrid struct{}

var (
	majorGrid = draw.LineStyle{Color: color.Gray{Y: 195}, Width: vg.Points(0.5)}
	minorGrid = draw.LineStyle{Color: color.Gray{Y: 225}, Width: vg.Points(0.3)}
)

// Plot implements plot.Plotter.
func (logGrid) Plot(c draw.Canvas, plt *plot.Plot) {
	trX, trY := plt.Transforms(&c)
	for _, tk := range plt.X.Tick.Marker.Ticks(plt.X.Min, plt.X.Max) {
		x := trX(tk.Value)
		if x < c.Min.X || x > c.Max.X {
			continue
		}
		st := majorGrid
		if tk.IsMinor() {
			st = minorGrid
		}
		c.StrokeLine2(st, x, c.Min.Y, x, c.Max.Y)
	}
	for _, tk := range plt.Y.Tick.Marker.Ticks(plt.Y.Min, plt.Y.Max) {
		if tk.IsMinor() {
			continue
		}
		y := trY(tk.Value)
		if y < c.Min.Y || y > c.Max.Y {
			continue
		}
		c.StrokeLine2(majorGrid, c.Min.X, y, c.Max.X, y)
	}
}

// plain writes a tick value with as many decimals as the step needs, and a
// true minus sign.
func plain(v, step float64) string {
	dec := max(0, int(-math.Floor(math.Log10(step)+1e-9)))
	s := strconv.FormatFloat(v, 'f', dec, 64)
	if s == "-0" {
		s = "0"
	}
	return strings.Replace(s, "-", "−", 1)
}
