package optimize

import (
	"context"
	"math"
	"os/exec"
	"strings"
	"testing"

	"drawerfit/fault"
	"drawerfit/stock"
	"drawerfit/synth"
)

func bestOf(t *testing.T, items []stock.Item, spec synth.Spec, o Options) *Result {
	t.Helper()
	r, err := Fit(context.Background(), items, spec, o)
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Candidates) == 0 {
		t.Fatalf("no candidate; limits: %v", r.Limits)
	}
	return r
}

// netlistFor writes a candidate's netlist the way the CLI does.
func netlistFor(c *Candidate) string {
	lo, hi := c.Design.Band()
	return synth.Netlist(c.Stages(), synth.NetlistOptions{Title: "check", FStart: lo, FStop: hi, PointsPerDecade: 20})
}

// reanalyse recomputes response error and attenuations of a candidate from
// its netlist with the independent nodal analysis (synth.AnalyzeNetlist).
func reanalyse(t *testing.T, c *Candidate, spec synth.Spec) (errDB, pass, stop float64) {
	t.Helper()
	g := gridFor(spec)
	h, err := synth.AnalyzeNetlist(netlistFor(c), g.f)
	if err != nil {
		t.Fatal(err)
	}
	for i, w := range g.w {
		e := math.Abs(synth.MagnitudeDB(h[i]) - synth.MagnitudeDB(c.Design.Target(w)))
		errDB = math.Max(errDB, e)
	}
	hp, err := synth.AnalyzeNetlist(netlistFor(c), []float64{spec.Pass})
	if err != nil {
		t.Fatal(err)
	}
	pass = synth.Attenuation(hp[0])
	stop = math.NaN()
	if spec.Stop > 0 {
		hs, err := synth.AnalyzeNetlist(netlistFor(c), []float64{spec.Stop})
		if err != nil {
			t.Fatal(err)
		}
		stop = synth.Attenuation(hs[0])
	}
	return
}

func TestBestCandidateReanalysedFromNetlist(t *testing.T) {
	t.Parallel()
	items := sampleStock(t)
	specs := []struct {
		name string
		spec synth.Spec
	}{
		{"butterworth-lowpass-stop", synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1000, Stop: 3000, StopAtten: 40}},
		{"chebyshev-highpass-order4", synth.Spec{Kind: synth.HighPass, Approx: synth.Chebyshev, Ripple: 0.5, Pass: 300, Order: 4}},
		{"bessel-lowpass-order3", synth.Spec{Kind: synth.LowPass, Approx: synth.Bessel, Pass: 5000, Order: 3}},
	}
	for _, tc := range specs {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			r := bestOf(t, items, tc.spec, DefaultOptions())
			c := r.Candidates[0]
			e, pa, sa := reanalyse(t, c, r.Spec)
			// The issue asks for agreement within 0.001 dB.
			if math.Abs(e-c.ResponseError) > 1e-3 {
				t.Errorf("response error: fit %.6f dB, nodal analysis %.6f dB", c.ResponseError, e)
			}
			if math.Abs(pa-c.PassAtten) > 1e-3 {
				t.Errorf("attenuation at fp: fit %.6f dB, nodal analysis %.6f dB", c.PassAtten, pa)
			}
			if !math.IsNaN(sa) && math.Abs(sa-c.StopAtten) > 1e-3 {
				t.Errorf("attenuation at fs: fit %.6f dB, nodal analysis %.6f dB", c.StopAtten, sa)
			}
		})
	}
}

// TestBestCandidateAgainstNgspice simulates the best candidate's netlist in
// ngspice (Debian package ngspice; installed by .ci/run) and compares the
// attenuation at fp and fs with the fit's figures within 0.001 dB.
func TestBestCandidateAgainstNgspice(t *testing.T) {
	t.Parallel()
	ng, err := exec.LookPath("ngspice")
	if err != nil {
		t.Skip("ngspice not installed; .ci/run installs it (apt-get install ngspice)")
	}
	spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1000, Stop: 3000, StopAtten: 40}
	r := bestOf(t, sampleStock(t), spec, DefaultOptions())
	c := r.Candidates[0]
	for _, f := range []struct {
		hz   float64
		want float64
	}{{r.Spec.Pass, c.PassAtten}, {r.Spec.Stop, c.StopAtten}} {
		net := synth.Netlist(c.Stages(), synth.NetlistOptions{Title: "check", FStart: f.hz, FStop: f.hz, PointsPerDecade: 1})
		// Replace the sweep by a single point and print the magnitude.
		var lines []string
		for _, l := range strings.Split(net, "\n") {
			if strings.HasPrefix(strings.ToLower(l), ".ac") || strings.HasPrefix(strings.ToLower(l), ".end") {
				continue
			}
			lines = append(lines, l)
		}
		lines = append(lines, ".control", "ac lin 1 "+ftoa(f.hz)+" "+ftoa(f.hz), "print vdb(out)", ".endc", ".end")
		cmd := exec.Command(ng, "-b", "/dev/stdin")
		cmd.Stdin = strings.NewReader(strings.Join(lines, "\n") + "\n")
		// ngspice exits 1 in batch mode for the missing .plot note even
		// when the analysis ran, so the printed value decides.
		out, _ := cmd.CombinedOutput()
		got := math.NaN()
		for _, l := range strings.Split(string(out), "\n") {
			if i := strings.Index(l, "vdb(out) ="); i >= 0 {
				got = -parseF(t, strings.TrimSpace(l[i+len("vdb(out) ="):]))
			}
		}
		if math.IsNaN(got) {
			t.Fatalf("no vdb(out) in ngspice output:\n%s", out)
		}
		if math.Abs(got-f.want) > 1e-3 {
			t.Errorf("at %g Hz: ngspice %.6f dB, fit %.6f dB", f.hz, got, f.want)
		}
	}
}

func TestCandidatesObeyStockAndFilters(t *testing.T) {
	t.Parallel()
	items := sampleStock(t)
	byID := map[int64]stock.Item{}
	for _, it := range items {
		byID[it.ID] = it
	}
	spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 2000, Order: 4}
	for _, tc := range []struct {
		name    string
		combine int
		boards  int
		allow   []string
	}{
		{"pairs-one-board", 2, 1, nil},
		{"singles-one-board", 1, 1, nil},
		{"pairs-ten-boards", 2, 10, nil},
		{"x7r-allowed", 1, 1, []string{"X7R"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			o := DefaultOptions()
			o.Combine, o.Boards, o.AllowDielectric = tc.combine, tc.boards, tc.allow
			r := bestOf(t, items, spec, o)
			for _, c := range r.Candidates {
				if !c.MeetsSpec {
					t.Errorf("listed candidate misses the spec")
				}
				use := map[int64]int{}
				for _, s := range c.Sections {
					for _, comp := range s.Components {
						if tc.combine == 1 && len(comp.Parts) != 1 {
							t.Errorf("%s made of %d parts with --combine 1", comp.Ref, len(comp.Parts))
						}
						lo, hi := o.RMin, o.RMax
						if comp.Kind == synth.Capacitor {
							lo, hi = o.CMin, o.CMax
						}
						if comp.Value < lo*(1-1e-9) || comp.Value > hi*(1+1e-9) {
							t.Errorf("%s = %g outside the range", comp.Ref, comp.Value)
						}
						for _, p := range comp.Parts {
							it, ok := byID[p.StockID]
							if !ok || it.Value != p.Value {
								t.Fatalf("%s uses stock row %d that does not hold %g", comp.Ref, p.StockID, p.Value)
							}
							if it.Kind == stock.Capacitor && !stock.SignalPathOK(it.Dielectric) &&
								(len(tc.allow) == 0 || stock.NormalizeDielectric(it.Dielectric) != "X7R") {
								t.Errorf("%s uses dielectric %s", comp.Ref, it.Dielectric)
							}
							use[p.StockID]++
						}
					}
				}
				for id, n := range use {
					if n*tc.boards > byID[id].Quantity {
						t.Errorf("row %d: %d per board × %d boards > %d on hand", id, n, tc.boards, byID[id].Quantity)
					}
				}
			}
		})
	}
}

func TestFitDeterministic(t *testing.T) {
	t.Parallel()
	items := sampleStock(t)
	spec := synth.Spec{Kind: synth.HighPass, Approx: synth.Butterworth, Pass: 100, Order: 4}
	a := bestOf(t, items, spec, DefaultOptions())
	b := bestOf(t, items, spec, DefaultOptions())
	if len(a.Candidates) != len(b.Candidates) {
		t.Fatal("different list lengths")
	}
	for i := range a.Candidates {
		if a.Candidates[i].ResponseError != b.Candidates[i].ResponseError || netlistFor(a.Candidates[i]) != netlistFor(b.Candidates[i]) {
			t.Errorf("candidate %d differs between runs", i+1)
		}
	}
}

func TestFitBadInput(t *testing.T) {
	t.Parallel()
	items := sampleStock(t)
	var resistorsOnly []stock.Item
	for _, it := range items {
		if it.Kind == stock.Resistor {
			resistorsOnly = append(resistorsOnly, it)
		}
	}
	good := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1000, Order: 2}
	for _, tc := range []struct {
		name  string
		items []stock.Item
		spec  synth.Spec
		mod   func(*Options)
		kind  fault.Kind
		words string
	}{
		{"empty-stock", nil, good, nil, fault.Infeasible, "no usable"},
		{"no-capacitors", resistorsOnly, good, nil, fault.Infeasible, "capacitors"},
		{"boards-zero", items, good, func(o *Options) { o.Boards = 0 }, fault.Invalid, "Boards"},
		{"top-zero", items, good, func(o *Options) { o.Top = 0 }, fault.Invalid, "Top"},
		{"combine-three", items, good, func(o *Options) { o.Combine = 3 }, fault.Invalid, "Combine"},
		{"stop-on-wrong-side", items, synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1000, Stop: 500, StopAtten: 40}, nil, fault.Invalid, ""},
		{"bessel-impossible", items, synth.Spec{Kind: synth.LowPass, Approx: synth.Bessel, Pass: 1000, Stop: 2000, StopAtten: 30}, nil, fault.Infeasible, ""},
	} {
		t.Run(tc.name, func(t *testing.T) {
			o := DefaultOptions()
			if tc.mod != nil {
				tc.mod(&o)
			}
			_, err := Fit(context.Background(), tc.items, tc.spec, o)
			if err == nil {
				t.Fatal("no error")
			}
			if fault.KindOf(err) != tc.kind {
				t.Errorf("kind %v, want %v: %v", fault.KindOf(err), tc.kind, err)
			}
			// Option mistakes name their field, in the domain's words (the
			// CLI maps it to a flag); other errors mention what limited them.
			if f := fault.FieldOf(err); f != "" {
				if string(f) != tc.words || strings.Contains(err.Error(), "--") {
					t.Errorf("field %q (message %q), want field %q and no flag text", f, err, tc.words)
				}
			} else if !strings.Contains(err.Error(), tc.words) {
				t.Errorf("message %q does not mention %q", err, tc.words)
			}
		})
	}
}

// TestFitNothingMeetsSpec: a stock whose capacitors are all far too small
// for a 10 Hz filter gives no candidate and an explanation, not an error.
func TestFitNothingMeetsSpec(t *testing.T) {
	t.Parallel()
	items := []stock.Item{
		{ID: 1, Kind: stock.Resistor, Value: 10e3, Tolerance: 0.01, Quantity: 10},
		{ID: 2, Kind: stock.Resistor, Value: 22e3, Tolerance: 0.01, Quantity: 10},
		{ID: 3, Kind: stock.Capacitor, Value: 100e-12, Tolerance: 0.05, Quantity: 10, Dielectric: "C0G"},
		{ID: 4, Kind: stock.Capacitor, Value: 220e-12, Tolerance: 0.05, Quantity: 10, Dielectric: "C0G"},
	}
	spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 10, Order: 2}
	r, err := Fit(context.Background(), items, spec, DefaultOptions())
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Candidates) != 0 {
		t.Fatalf("%d candidates from an unusable stock", len(r.Candidates))
	}
	if len(r.Limits) == 0 {
		t.Fatal("no explanation of what limited the fit")
	}
}

// TestHugeStockRefused: pairing a stock of 3000 resistor rows would need
// about nine million combinations; the fit refuses with a clear message
// instead of exhausting memory (singles still work).
func TestHugeStockRefused(t *testing.T) {
	t.Parallel()
	var items []stock.Item
	for i := 0; i < 3000; i++ {
		items = append(items, stock.Item{ID: int64(i + 1), Kind: stock.Resistor, Value: 1e3 * math.Pow(1000, float64(i)/3000), Tolerance: 0.01, Quantity: 5})
	}
	items = append(items, stock.Item{ID: 9999, Kind: stock.Capacitor, Value: 10e-9, Tolerance: 0.05, Quantity: 5, Dielectric: "C0G"})
	spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1000, Order: 1}
	_, err := Fit(context.Background(), items, spec, DefaultOptions())
	if fault.KindOf(err) != fault.Invalid || !strings.Contains(err.Error(), "--combine 1") {
		t.Fatalf("want a refusal naming --combine 1, got %v", err)
	}
	o := DefaultOptions()
	o.Combine = 1
	if _, err := Fit(context.Background(), items, spec, o); err != nil {
		t.Fatalf("singles: %v", err)
	}
}

// TestFitTooFewPartsForBoards: every row holds fewer parts than the boards
// asked; the fit is not an error but a result without candidates whose
// limits name the quantity.
func TestFitTooFewPartsForBoards(t *testing.T) {
	t.Parallel()
	items := sampleStock(t)
	o := DefaultOptions()
	o.Boards = 10000
	r, err := Fit(context.Background(), items, synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1000, Order: 2}, o)
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Candidates) != 0 || len(r.Limits) == 0 || !strings.Contains(r.Limits[0], "quantity for 10000 boards") {
		t.Fatalf("candidates %d, limits %q", len(r.Candidates), r.Limits)
	}
	for _, d := range r.Designs {
		if d.Order != 2 {
			t.Errorf("a design of order %d, want only the order asked", d.Order)
		}
	}
}
