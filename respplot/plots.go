package respplot

import (
	"bytes"
	"fmt"
	"image/color"
	"math"
	"os"
	"path/filepath"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"

	"drawerfit/synth"
)

// Line styles. Curves differ in dash pattern and width as well as colour so
// that a black-and-white print keeps them apart.
var (
	targetStyle = draw.LineStyle{Color: color.Gray{Y: 0}, Width: vg.Points(1.6)}
	// nominalStyle is dashed and blue.
	nominalStyle = draw.LineStyle{Color: color.RGBA{R: 20, G: 70, B: 170, A: 255}, Width: vg.Points(1.4),
		Dashes: []vg.Length{vg.Points(5), vg.Points(2.5)}}
	// bandEdgeStyle is dotted.
	bandEdgeStyle = draw.LineStyle{Color: color.Gray{Y: 90}, Width: vg.Points(0.8),
		Dashes: []vg.Length{vg.Points(1), vg.Points(1.5)}}
	bandFill = color.RGBA{R: 190, G: 205, B: 228, A: 255}
	// maskFill marks the region the specification forbids; light enough to
	// print as a faint grey.
	maskFill  = color.Gray{Y: 232}
	maskStyle = draw.LineStyle{Color: color.Gray{Y: 60}, Width: vg.Points(1.2)}
	edgeStyle = draw.LineStyle{Color: color.Gray{Y: 80}, Width: vg.Points(0.7),
		Dashes: []vg.Length{vg.Points(3), vg.Points(3)}}
)

// Figure is one finished plot with a stable name used for file names and
// element ids ("magnitude", "phase", "group-delay").
type Figure struct {
	Name   string
	Title  string
	Plot   *plot.Plot
	Width  vg.Length
	Height vg.Length
}

// Default figure sizes: the full text width of an A4 or Letter page with
// 15 mm margins is about 7 in; 6.8 in leaves room (a layout choice).
const (
	figWidth       = 6.8 * vg.Inch
	magHeight      = 3.4 * vg.Inch
	secondaryHight = 2.5 * vg.Inch
)

// Figures returns the magnitude, phase and group-delay plots of r, in that
// order.
func Figures(r *Response) ([]Figure, error) {
	if err := r.Validate(); err != nil {
		return nil, err
	}
	f := r.grid()
	mag, err := Magnitude(r, f)
	if err != nil {
		return nil, err
	}
	ph, err := Phase(r, f)
	if err != nil {
		return nil, err
	}
	gd, err := GroupDelay(r, f)
	if err != nil {
		return nil, err
	}
	return []Figure{
		{Name: "magnitude", Title: "Magnitude response", Plot: mag, Width: figWidth, Height: magHeight},
		{Name: "phase", Title: "Phase", Plot: ph, Width: figWidth, Height: secondaryHight},
		{Name: "group-delay", Title: "Group delay", Plot: gd, Width: figWidth, Height: secondaryHight},
	}, nil
}

func newPlot(lo, hi float64, ylabel string) *plot.Plot {
	p := plot.New()
	p.X.Scale = plot.LogScale{}
	p.X.Tick.Marker = FreqTicks{}
	p.X.Min, p.X.Max = lo, hi
	p.X.Label.Text = "frequency"
	p.Y.Label.Text = ylabel
	useSans(p)
	p.Add(logGrid{})
	return p
}

func xys(f, y []float64) plotter.XYs {
	pts := make(plotter.XYs, 0, len(f))
	for i := range f {
		if math.IsNaN(y[i]) || math.IsInf(y[i], 0) {
			continue
		}
		pts = append(pts, plotter.XY{X: f[i], Y: y[i]})
	}
	return pts
}

// addLine adds a line through pts; a non-empty name also goes into leg.
func addLine(p *plot.Plot, leg *legend, pts plotter.XYs, st draw.LineStyle, name string) error {
	if len(pts) < 2 {
		return nil
	}
	l, err := plotter.NewLine(pts)
	if err != nil {
		return fmt.Errorf("respplot: %s line: %w", name, err)
	}
	l.LineStyle = st
	p.Add(l)
	if name != "" {
		leg.add(name, l)
	}
	return nil
}

// Magnitude returns the gain plot (dB against frequency) of r sampled at f
// (Hz; nil means the default grid): the specification mask, every band, the
// target (solid) and the nominal candidate (dashed), with fp and fs marked.
func Magnitude(r *Response, f []float64) (*plot.Plot, error) {
	if err := r.Validate(); err != nil {
		return nil, err
	}
	if f == nil {
		f = r.grid()
	}
	lo, hi := f[0], f[len(f)-1]
	tg, _, _ := Sample(r.Target, f)
	var ng []float64
	if r.Nominal != nil {
		ng, _, _ = Sample(r.Nominal, f)
	}
	top, bottom := magRange(r, tg, ng)
	p := newPlot(lo, hi, "gain (dB)")
	var leg legend
	if err := addMask(p, &leg, r, lo, hi, bottom, top); err != nil {
		return nil, err
	}
	for _, b := range r.Bands {
		if err := addBand(p, &leg, b); err != nil {
			return nil, err
		}
	}
	if err := addLine(p, &leg, xys(f, tg), targetStyle, "ideal target"); err != nil {
		return nil, err
	}
	if ng != nil {
		if err := addLine(p, &leg, xys(f, ng), nominalStyle, "nominal parts"); err != nil {
			return nil, err
		}
	}
	// Set the axes last: Add widens them to every plotter's data range.
	p.X.Min, p.X.Max = lo, hi
	p.Y.Min, p.Y.Max = bottom, top
	p.Y.Tick.Marker = StepTicks{}
	// The stopband corner is empty of curves: top right for a low-pass,
	// top left for a high-pass.
	leg.install(p, true, r.Kind == synth.HighPass)
	return p, nil
}

// magRange picks the gain axis: 5 dB above the highest curve point rounded
// up to 5 dB, and down to 20 dB below the stopband requirement (or -40 dB
// without one), rounded down to 10 dB.
func magRange(r *Response, curves ...[]float64) (top, bottom float64) {
	peak := 0.0
	for _, c := range curves {
		for _, v := range c {
			if v > peak && !math.IsInf(v, 0) {
				peak = v
			}
		}
	}
	for _, b := range r.Bands {
		for _, v := range b.Hi {
			if v > peak && !math.IsInf(v, 0) {
				peak = v
			}
		}
	}
	top = math.Ceil(peak/5)*5 + 5
	bottom = -40
	if r.Limits.Fs > 0 && r.Limits.As > 0 {
		bottom = -math.Ceil((r.Limits.As+20)/10) * 10
	}
	return top, bottom
}

// addMask shades the regions the specification forbids: below -Ap across
// the passband and above -As across the stopband, and draws fp and fs as
// dashed verticals.
func addMask(p *plot.Plot, leg *legend, r *Response, lo, hi, bottom, top float64) error {
	L := r.Limits
	hp := r.Kind == synth.HighPass
	var regions []plotter.XYs
	if L.Ap > 0 {
		a, b := lo, L.Fp
		if hp {
			a, b = L.Fp, hi
		}
		regions = append(regions, plotter.XYs{{X: a, Y: -L.Ap}, {X: b, Y: -L.Ap}, {X: b, Y: bottom}, {X: a, Y: bottom}})
	}
	if L.Fs > 0 && L.As > 0 {
		a, b := L.Fs, hi
		if hp {
			a, b = lo, L.Fs
		}
		regions = append(regions, plotter.XYs{{X: a, Y: -L.As}, {X: b, Y: -L.As}, {X: b, Y: top}, {X: a, Y: top}})
	}
	for i, reg := range regions {
		poly, err := plotter.NewPolygon(reg)
		if err != nil {
			return fmt.Errorf("respplot: specification mask: %w", err)
		}
		poly.Color = maskFill
		poly.LineStyle = maskStyle
		p.Add(poly)
		if i == 0 {
			leg.add("outside the specification", poly)
		}
	}
	edges := []struct {
		f    float64
		name string
	}{{L.Fp, "fp"}, {L.Fs, "fs"}}
	for _, e := range edges {
		if !(e.f > lo && e.f < hi) {
			continue
		}
		if err := addLine(p, leg, plotter.XYs{{X: e.f, Y: bottom}, {X: e.f, Y: top}}, edgeStyle, ""); err != nil {
			return err
		}
		// Write the label on the transition-band side of its line, at the
		// bottom, where neither the mask nor the curve is: right of fp and
		// left of fs for a low-pass, the other way round for a high-pass.
		right := (e.name == "fp") != hp
		l, err := plotter.NewLabels(plotter.XYLabels{
			XYs:    plotter.XYs{{X: e.f, Y: bottom}},
			Labels: []string{e.name + " " + synth.FormatFrequency(e.f, 4)},
		})
		if err != nil {
			return fmt.Errorf("respplot: edge labels: %w", err)
		}
		st := &l.TextStyle[0]
		st.Font = sans
		st.Font.Size = vg.Points(8)
		st.YAlign = draw.YBottom
		st.XAlign = draw.XLeft
		l.Offset = vg.Point{X: vg.Points(3), Y: vg.Points(3)}
		if !right {
			st.XAlign = draw.XRight
			l.Offset.X = -vg.Points(3)
		}
		p.Add(l)
	}
	return nil
}

func addBand(p *plot.Plot, leg *legend, b Band) error {
	if len(b.Freq) < 2 {
		return nil
	}
	pts := make(plotter.XYs, 0, 2*len(b.Freq))
	for i := range b.Freq {
		pts = append(pts, plotter.XY{X: b.Freq[i], Y: b.Hi[i]})
	}
	for i := len(b.Freq) - 1; i >= 0; i-- {
		pts = append(pts, plotter.XY{X: b.Freq[i], Y: b.Lo[i]})
	}
	poly, err := plotter.NewPolygon(pts)
	if err != nil {
		return fmt.Errorf("respplot: band %q: %w", b.Label, err)
	}
	poly.Color = bandFill
	poly.LineStyle = bandEdgeStyle
	p.Add(poly)
	label := b.Label
	if label == "" {
		label = "Monte Carlo envelope"
	}
	leg.add(label, poly)
	return nil
}

// Phase returns the phase plot (degrees against frequency) of the target
// (solid) and the nominal candidate (dashed), sampled at f (nil: default).
func Phase(r *Response, f []float64) (*plot.Plot, error) {
	if err := r.Validate(); err != nil {
		return nil, err
	}
	if f == nil {
		f = r.grid()
	}
	_, tp, _ := Sample(r.Target, f)
	p := newPlot(f[0], f[len(f)-1], "phase (°)")
	var leg legend
	var np []float64
	if r.Nominal != nil {
		_, np, _ = Sample(r.Nominal, f)
	}
	// Read the phase from the passband: a low-pass starts near 0°, a
	// high-pass ends near 0° (+n·90° below its edge rather than -n·270°).
	if r.Kind == synth.HighPass {
		shiftToZero(tp, len(tp)-1)
		shiftToZero(np, len(np)-1)
	}
	curves := [][]float64{tp, np}
	if err := addLine(p, &leg, xys(f, tp), targetStyle, "ideal target"); err != nil {
		return nil, err
	}
	if np != nil {
		if err := addLine(p, &leg, xys(f, np), nominalStyle, "nominal parts"); err != nil {
			return nil, err
		}
	}
	lo, hi := extent(curves...)
	p.X.Min, p.X.Max = f[0], f[len(f)-1]
	p.Y.Min, p.Y.Max = math.Floor(lo/45)*45, math.Ceil(hi/45)*45
	if p.Y.Max-p.Y.Min < 90 {
		p.Y.Max = p.Y.Min + 90
	}
	p.Y.Tick.Marker = DegreeTicks{}
	// The phase falls from left to right in both cases, leaving the bottom
	// left corner empty.
	leg.install(p, false, true)
	return p, nil
}

// GroupDelay returns the group-delay plot of the target (solid) and the
// nominal candidate (dashed), sampled at f (nil: default), in s, ms or µs
// as suits the largest delay.
func GroupDelay(r *Response, f []float64) (*plot.Plot, error) {
	if err := r.Validate(); err != nil {
		return nil, err
	}
	if f == nil {
		f = r.grid()
	}
	_, _, td := Sample(r.Target, f)
	curves := [][]float64{td}
	var nd []float64
	if r.Nominal != nil {
		_, _, nd = Sample(r.Nominal, f)
		curves = append(curves, nd)
	}
	_, hiv := extent(curves...)
	scale, unit := delayUnit(hiv)
	scaled := func(d []float64) []float64 {
		out := make([]float64, len(d))
		for i, v := range d {
			out[i] = v * scale
		}
		return out
	}
	p := newPlot(f[0], f[len(f)-1], "group delay ("+unit+")")
	var leg legend
	if err := addLine(p, &leg, xys(f, scaled(td)), targetStyle, "ideal target"); err != nil {
		return nil, err
	}
	if nd != nil {
		if err := addLine(p, &leg, xys(f, scaled(nd)), nominalStyle, "nominal parts"); err != nil {
			return nil, err
		}
	}
	p.X.Min, p.X.Max = f[0], f[len(f)-1]
	p.Y.Min = 0
	p.Y.Max = hiv * scale * 1.15
	if !(p.Y.Max > 0) {
		p.Y.Max = 1
	}
	p.Y.Tick.Marker = StepTicks{}
	leg.install(p, true, r.Kind == synth.HighPass)
	return p, nil
}

// shiftToZero moves the phase curve ph by whole turns so that ph[i] lies in
// (-180°, 180°]. It does nothing for an empty curve.
func shiftToZero(ph []float64, i int) {
	if len(ph) == 0 {
		return
	}
	k := math.Ceil((ph[i]-180)/360) * 360
	for j := range ph {
		ph[j] -= k
	}
}

func delayUnit(maxSeconds float64) (scale float64, unit string) {
	switch {
	case maxSeconds >= 1:
		return 1, "s"
	case maxSeconds >= 1e-3:
		return 1e3, "ms"
	default:
		return 1e6, "µs"
	}
}

func extent(curves ...[]float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, c := range curves {
		for _, v := range c {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				continue
			}
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
	}
	if lo > hi {
		return 0, 0
	}
	return lo, hi
}

// fontFamilies is what browsers get instead of the bare "Liberation Sans"
// that gonum's SVG canvas names: the same metrics are in Arial and
// Helvetica, and any sans-serif is an acceptable last resort.
const fontFamilies = `font-family:'Liberation Sans',Arial,Helvetica,sans-serif`

// SVG renders fig as an SVG element ready to be placed inside an HTML page:
// no XML declaration, an id "plot-NAME", class "plot", a <title> for
// accessibility, and font families that fall back to common sans-serif
// fonts. The output references nothing outside itself.
func SVG(fig Figure) ([]byte, error) {
	c := vgsvg.New(fig.Width, fig.Height)
	fig.Plot.Draw(draw.New(c))
	var buf bytes.Buffer
	if _, err := c.WriteTo(&buf); err != nil {
		return nil, fmt.Errorf("respplot: write %s SVG: %w", fig.Name, err)
	}
	s := buf.String()
	i := strings.Index(s, "<svg ")
	if i < 0 {
		return nil, fmt.Errorf("respplot: %s: canvas wrote no <svg> element", fig.Name)
	}
	s = s[i:]
	j := strings.Index(s, ">")
	head := strings.Replace(s[:j], "<svg ", fmt.Sprintf(`<svg id="plot-%s" class="plot" role="img" aria-label="%s" `,
		fig.Name, xmlAttr(fig.Title)), 1)
	s = head + ">\n<title>" + xmlAttr(fig.Title) + "</title>" + s[j+1:]
	s = strings.ReplaceAll(s, "font-family:Liberation Sans", fontFamilies)
	return []byte(s), nil
}

func xmlAttr(s string) string {
	r := strings.NewReplacer("&", "&amp;", "<", "&lt;", ">", "&gt;", `"`, "&quot;", "'", "&#39;")
	return r.Replace(s)
}

// pngDPI is the resolution of PNG files: sharp on screen and in print
// (a choice of this package).
const pngDPI = 150

// PNG renders fig as a PNG image.
func PNG(fig Figure) ([]byte, error) {
	c := vgimg.NewWith(vgimg.UseWH(fig.Width, fig.Height), vgimg.UseDPI(pngDPI),
		vgimg.UseBackgroundColor(color.White))
	fig.Plot.Draw(draw.New(c))
	var buf bytes.Buffer
	if _, err := (vgimg.PngCanvas{Canvas: c}).WriteTo(&buf); err != nil {
		return nil, fmt.Errorf("respplot: write %s PNG: %w", fig.Name, err)
	}
	return buf.Bytes(), nil
}

// WritePNGs writes every figure to dir as NAME.png (prefix prepended when
// not empty, e.g. "lp1k-magnitude.png") and returns the paths written. The
// directory must exist.
func WritePNGs(dir, prefix string, figs []Figure) ([]string, error) {
	var paths []string
	for _, fig := range figs {
		b, err := PNG(fig)
		if err != nil {
			return paths, err
		}
		name := fig.Name + ".png"
		if prefix != "" {
			name = prefix + "-" + name
		}
		path := filepath.Join(dir, name)
		if err := os.WriteFile(path, b, 0o644); err != nil {
			return paths, fmt.Errorf("write plot: %w", err)
		}
		paths = append(paths, path)
	}
	return paths, nil
}
