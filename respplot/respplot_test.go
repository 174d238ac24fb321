package respplot

import (
	"bytes"
	"encoding/xml"
	"flag"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"drawerfit/internal/testkit"
	"drawerfit/synth"
)

var update = flag.Bool("update", false, "rewrite the golden files under testdata/")

func TestFormatEng(t *testing.T) {
	t.Parallel()
	// SI prefixes and their powers: the SI Brochure (BIPM, 9th edition,
	// table 7). Expected strings are the plain decimal renderings.
	cases := []struct {
		name string
		v    float64
		unit string
		sig  int
		want string
	}{
		{"kilo", 15300, "Ω", 3, "15.3 kΩ"},
		{"nano", 2.2e-9, "F", 3, "2.2 nF"},
		{"micro", 4.7e-6, "F", 3, "4.7 µF"},
		{"pico", 680e-12, "F", 3, "680 pF"},
		{"mega", 1e6, "Ω", 3, "1 MΩ"},
		{"unit", 470, "Ω", 3, "470 Ω"},
		{"round up across prefix", 999.96, "Hz", 3, "1 kHz"},
		{"four digits", 12330, "Ω", 4, "12.33 kΩ"},
		{"trailing zeros dropped", 1000, "Hz", 3, "1 kHz"},
		{"negative", -90, "", 3, "-90"},
		{"milli", 0.00125, "s", 3, "1.25 ms"},
		{"zero", 0, "V", 3, "0 V"},
		{"beyond giga", 3e12, "Hz", 2, "3.0e+12 Hz"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if got := FormatEng(c.v, c.unit, c.sig); got != c.want {
				t.Errorf("FormatEng(%g, %q, %d) = %q, want %q", c.v, c.unit, c.sig, got, c.want)
			}
		})
	}
}

func TestFreqTicks(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name     string
		lo, hi   float64
		labels   []string
		minorMin int
	}{
		{"three decades label decades only", 100, 100e3, []string{"100 Hz", "1 kHz", "10 kHz", "100 kHz"}, 24},
		{"two decades add 2 and 5", 100, 10e3,
			[]string{"100 Hz", "200 Hz", "500 Hz", "1 kHz", "2 kHz", "5 kHz", "10 kHz"}, 8},
		{"under a decade label all", 300, 2000,
			[]string{"300 Hz", "400 Hz", "500 Hz", "600 Hz", "700 Hz", "800 Hz", "900 Hz", "1 kHz", "2 kHz"}, 0},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			var labels []string
			minor := 0
			for _, tk := range (FreqTicks{}).Ticks(c.lo, c.hi) {
				if tk.Value < c.lo*(1-1e-9) || tk.Value > c.hi*(1+1e-9) {
					t.Errorf("tick %g outside %g..%g", tk.Value, c.lo, c.hi)
				}
				if tk.Label == "" {
					minor++
				} else {
					labels = append(labels, tk.Label)
				}
			}
			if strings.Join(labels, ",") != strings.Join(c.labels, ",") {
				t.Errorf("labels %q, want %q", labels, c.labels)
			}
			if minor < c.minorMin {
				t.Errorf("%d minor ticks, want at least %d", minor, c.minorMin)
			}
		})
	}
}

func TestSample(t *testing.T) {
	t.Parallel()
	// Butterworth: |H|² = 1/(1+w^(2n)) (docs/check-values.md, "Approximations"), so -10·log10(2) dB at
	// the edge for every order; the phase of an n-th order low-pass at its
	// edge is -n·45°, and a first-order RC low-pass has group delay
	// τ/(1+(ωτ)²) (standard results of circuit analysis).
	const f0 = 1000.0
	for _, n := range []int{1, 2, 4} {
		gain, phase, _ := Sample(butterworth(n, f0, false), []float64{f0 / 100, f0})
		if !testkit.Abs(1e-9).Equal(gain[1], -10*math.Log10(2)) {
			t.Errorf("n=%d gain at edge %.6f dB, want -3.0103", n, gain[1])
		}
		if !testkit.Abs(1e-6).Equal(phase[1], -float64(n)*45) {
			t.Errorf("n=%d phase at edge %.6f°, want %d°", n, phase[1], -45*n)
		}
	}
	tau := 1e-3
	f := []float64{1, 100, 159.15494309189535, 1000}
	_, _, d := Sample(rcLowPass(tau), f)
	for i, fi := range f {
		w := 2 * math.Pi * fi
		want := tau / (1 + w*w*tau*tau)
		if !testkit.Rel(1e-6).Equal(d[i], want) {
			t.Errorf("group delay at %g Hz = %g s, want %g", fi, d[i], want)
		}
	}
	// Unwrapping: an 8th-order low-pass ends near -720°, not folded back.
	_, ph, _ := Sample(butterworth(8, f0, false), LogGrid(10, 1e6, 400))
	if last := ph[len(ph)-1]; last > -700 || last < -720 {
		t.Errorf("8th-order phase at 1 MHz = %.1f°, want close to -720°", last)
	}
}

func lowpassResponse() *Response {
	return &Response{
		Kind:    synth.LowPass,
		Target:  butterworth(4, 1000, false),
		Nominal: butterworth(4, 1015, false),
		Limits:  Limits{Fp: 1000, Ap: 3.0103, Fs: 3000, As: 36},
	}
}

func TestFiguresSVG(t *testing.T) {
	t.Parallel()
	r := lowpassResponse()
	// A Monte Carlo band of ±0.5 dB around the nominal curve.
	f := LogGrid(100, 9000, 60)
	nom, _, _ := Sample(r.Nominal, f)
	b := Band{Label: "5th–95th percentile <of 500>", Freq: f, Lo: make([]float64, len(f)), Hi: make([]float64, len(f))}
	for i := range f {
		b.Lo[i], b.Hi[i] = nom[i]-0.5, nom[i]+0.5
	}
	r.Bands = []Band{b}
	figs, err := Figures(r)
	if err != nil {
		t.Fatal(err)
	}
	wantNames := []string{"magnitude", "phase", "group-delay"}
	if len(figs) != len(wantNames) {
		t.Fatalf("%d figures, want %d", len(figs), len(wantNames))
	}
	for i, fig := range figs {
		t.Run(fig.Name, func(t *testing.T) {
			if fig.Name != wantNames[i] {
				t.Fatalf("figure %d is %q, want %q", i, fig.Name, wantNames[i])
			}
			svg, err := SVG(fig)
			if err != nil {
				t.Fatal(err)
			}
			s := string(svg)
			if !strings.HasPrefix(s, `<svg id="plot-`+fig.Name+`" class="plot"`) {
				t.Errorf("SVG starts %q", s[:min(80, len(s))])
			}
			// Self-contained: the only URL is the SVG namespace.
			for _, bad := range []string{"<?xml", "<image", "href=", "@import", "url("} {
				if strings.Contains(s, bad) {
					t.Errorf("SVG contains %q", bad)
				}
			}
			if err := xml.Unmarshal(svg, new(struct{})); err != nil {
				t.Errorf("SVG is not well-formed XML: %v", err)
			}
			for _, want := range []string{"frequency", "1 kHz", "ideal target", "nominal parts", "<title>"} {
				if !strings.Contains(s, want) {
					t.Errorf("SVG lacks %q", want)
				}
			}
			if fig.Name == "magnitude" {
				for _, want := range []string{"fp 1 kHz", "fs 3 kHz", "outside the specification", "&lt;of 500&gt;"} {
					if !strings.Contains(s, want) {
						t.Errorf("magnitude SVG lacks %q", want)
					}
				}
				// Dashes tell the nominal curve apart in black and white.
				if !strings.Contains(s, "stroke-dasharray") {
					t.Error("no dashed line in the magnitude plot")
				}
			}
		})
	}
}

func TestPNG(t *testing.T) {
	t.Parallel()
	figs, err := Figures(lowpassResponse())
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	paths, err := WritePNGs(dir, "lp", figs[:1])
	if err != nil {
		t.Fatal(err)
	}
	if len(paths) != 1 || filepath.Base(paths[0]) != "lp-magnitude.png" {
		t.Fatalf("paths %q", paths)
	}
	b, err := os.ReadFile(paths[0])
	if err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(bytes.NewReader(b))
	if err != nil {
		t.Fatal(err)
	}
	// 6.8 in × 3.4 in at 150 dpi.
	if w, h := img.Bounds().Dx(), img.Bounds().Dy(); w != 1020 || h != 510 {
		t.Errorf("PNG is %d×%d, want 1020×510", w, h)
	}
	dark := 0
	for y := 0; y < img.Bounds().Dy(); y += 2 {
		for x := 0; x < img.Bounds().Dx(); x += 2 {
			r, g, b, _ := img.At(x, y).RGBA()
			if r+g+b < 3*0x8000 {
				dark++
			}
		}
	}
	if dark < 500 {
		t.Errorf("only %d dark pixels sampled: the plot looks empty", dark)
	}
}

func TestValidate(t *testing.T) {
	t.Parallel()
	good := lowpassResponse()
	cases := []struct {
		name string
		mod  func(r *Response)
	}{
		{"no target", func(r *Response) { r.Target = nil }},
		{"no fp", func(r *Response) { r.Limits.Fp = 0 }},
		{"negative fs", func(r *Response) { r.Limits.Fs = -1 }},
		{"ragged band", func(r *Response) { r.Bands = []Band{{Freq: []float64{1, 2}, Lo: []float64{0}, Hi: []float64{0, 1}}} }},
		{"descending band", func(r *Response) {
			r.Bands = []Band{{Freq: []float64{2, 1}, Lo: []float64{0, 0}, Hi: []float64{0, 0}}}
		}},
		{"empty range", func(r *Response) { r.FMin, r.FMax = 100, 10 }},
	}
	if err := good.Validate(); err != nil {
		t.Fatalf("good response: %v", err)
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			r := *good
			c.mod(&r)
			if err := r.Validate(); err == nil {
				t.Error("no error")
			}
			if _, err := Figures(&r); err == nil {
				t.Error("Figures drew an invalid response")
			}
		})
	}
}

func TestRange(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name   string
		kind   synth.Kind
		l      Limits
		lo, hi float64
	}{
		{"lowpass with fs", synth.LowPass, Limits{Fp: 1000, Fs: 3000}, 100, 9000},
		{"lowpass without fs", synth.LowPass, Limits{Fp: 1000}, 100, 10000},
		{"highpass with fs", synth.HighPass, Limits{Fp: 300, Fs: 60}, 20, 3000},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			r := Response{Kind: c.kind, Limits: c.l}
			lo, hi := r.Range()
			if !testkit.Rel(1e-9).Equal(lo, c.lo) || !testkit.Rel(1e-9).Equal(hi, c.hi) {
				t.Errorf("range %g..%g, want %g..%g", lo, hi, c.lo, c.hi)
			}
		})
	}
}

func TestSketch(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name string
		r    *Response
	}{
		{"lowpass", lowpassResponse()},
		{"highpass", &Response{Kind: synth.HighPass, Target: butterworth(3, 300, true),
			Nominal: butterworth(3, 290, true), Limits: Limits{Fp: 300, Ap: 3.0103, Fs: 100, As: 25}}},
		{"target-only", &Response{Kind: synth.LowPass, Target: butterworth(2, 5000, false),
			Limits: Limits{Fp: 5000, Ap: 3.0103}}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			got, err := Sketch(c.r, 60, 12)
			if err != nil {
				t.Fatal(err)
			}
			golden(t, filepath.Join("testdata", "sketch-"+c.name+".txt"), got)
			lines := strings.Split(strings.TrimSuffix(got, "\n"), "\n")
			if len(lines) != 12+3 {
				t.Errorf("%d lines, want 15", len(lines))
			}
			for i, l := range lines {
				if strings.TrimRight(l, " ") != l {
					t.Errorf("line %d has trailing spaces", i)
				}
				if n := len([]rune(l)); n > 8+1+60 {
					t.Errorf("line %d is %d runes wide", i, n)
				}
			}
			// The passband sits in the top rows: the 0 dB row holds the target
			// (or the nominal drawn over it) at the passband end.
			zero := ""
			for _, l := range lines {
				if strings.HasPrefix(strings.TrimLeft(l, " "), "0 dB |") {
					zero = l
				}
			}
			if zero == "" {
				t.Fatalf("no 0 dB row in\n%s", got)
			}
			end := 9 // first plot column, after the 8-rune gutter and '|'
			if c.r.Kind == synth.HighPass {
				end = len([]rune(zero)) - 1
			}
			if ch := []rune(zero)[end]; ch != markTarget && ch != markNominal {
				t.Errorf("0 dB row has %q at the passband end, want a curve: %q", ch, zero)
			}
		})
	}
}

func golden(t *testing.T, path, got string) {
	t.Helper()
	if *update {
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test -update to create it)", err)
	}
	if string(want) != got {
		t.Errorf("%s differs from the output (run go test -update after checking):\n--- got\n%s--- want\n%s", path, got, want)
	}
}

func TestShiftToZero(t *testing.T) {
	t.Parallel()
	// Whole turns only: the value at the anchor lands in (-180°, 180°].
	cases := []struct {
		name string
		in   []float64
		want []float64
	}{
		{"high-pass 3rd order", []float64{-90, -200, -355}, []float64{270, 160, 5}},
		{"already there", []float64{90, 10}, []float64{90, 10}},
		{"exactly 180", []float64{540, 180}, []float64{540, 180}},
		{"empty", nil, nil},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			got := append([]float64(nil), c.in...)
			shiftToZero(got, len(got)-1)
			for i := range got {
				if !testkit.Abs(1e-9).Equal(got[i], c.want[i]) {
					t.Errorf("got %v, want %v", got, c.want)
					break
				}
			}
		})
	}
}

func TestPercentileBand(t *testing.T) {
	t.Parallel()
	// Type-7 quantiles of 1..5: p5 = 1 + 0.05·4 = 1.2, p95 = 4.8 (the
	// definition in Hyndman & Fan 1996, as numpy.percentile computes it).
	f := []float64{100, 200}
	gains := [][]float64{{1, -1}, {2, -2}, {3, -3}, {4, -4}, {5, math.NaN()}}
	b := PercentileBand("x", f, gains, 5, 95)
	want := [][2]float64{{1.2, 4.8}, {-4 + 0.05*3, -1 - 0.05*3}}
	for i := range f {
		if !testkit.Abs(1e-12).Equal(b.Lo[i], want[i][0]) || !testkit.Abs(1e-12).Equal(b.Hi[i], want[i][1]) {
			t.Errorf("at %g Hz band %g..%g, want %g..%g", f[i], b.Lo[i], b.Hi[i], want[i][0], want[i][1])
		}
	}
}
