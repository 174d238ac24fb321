package synth

import (
	"encoding/json"
	"fmt"
	"math"
	"math/cmplx"
	"os"
	"sort"
	"testing"

	"drawerfit/fault"
	"drawerfit/internal/testkit"
)

// The reference file is written by testdata/gen/reference.py with
// scipy.signal (Debian python3-scipy): buttap, cheb1ap, besselap for poles,
// buttord and cheb1ord for closed-form orders, butter/cheby1/bessel with
// freqs for attenuations and the order searches.

type refSection struct {
	W0 float64 `json:"w0"`
	Q  float64 `json:"q"`
}

type refPrototype struct {
	Approx   string       `json:"approx"`
	Ripple   float64      `json:"ripple"`
	Norm     string       `json:"norm"`
	Order    int          `json:"order"`
	Poles    [][2]float64 `json:"poles"`
	Sections []refSection `json:"sections"`
}

type refOrder struct {
	Approx     string   `json:"approx"`
	Kind       string   `json:"kind"`
	Fp         float64  `json:"fp"`
	Fs         float64  `json:"fs"`
	Ap         float64  `json:"ap"`
	As         float64  `json:"as"`
	Norm       string   `json:"norm"`
	ClosedForm int      `json:"closed_form"`
	Order      *int     `json:"order"`
	AttenPass  *float64 `json:"atten_pass"`
	AttenStop  *float64 `json:"atten_stop"`
}

type reference struct {
	Source     string         `json:"source"`
	Prototypes []refPrototype `json:"prototypes"`
	Orders     []refOrder     `json:"orders"`
}

func loadReference(t *testing.T) *reference {
	t.Helper()
	b, err := os.ReadFile("testdata/reference.json")
	if err != nil {
		t.Fatalf("read reference (regenerate with /usr/bin/python3 synth/testdata/gen/reference.py): %v", err)
	}
	var r reference
	if err := json.Unmarshal(b, &r); err != nil {
		t.Fatalf("parse reference: %v", err)
	}
	if len(r.Prototypes) == 0 || len(r.Orders) == 0 {
		t.Fatal("reference file is empty")
	}
	return &r
}

func (p refPrototype) spec() (Approx, BesselNorm) {
	a, err := ParseApprox(p.Approx)
	if err != nil {
		panic(err)
	}
	norm := BesselMag
	if p.Norm == "delay" {
		norm = BesselDelay
	}
	return a, norm
}

func sortPoles(p []complex128) {
	sort.Slice(p, func(i, j int) bool {
		if imag(p[i]) != imag(p[j]) {
			return imag(p[i]) < imag(p[j])
		}
		return real(p[i]) < real(p[j])
	})
}

// TestPrototypePolesScipy holds every prototype's poles to scipy.signal's
// buttap / cheb1ap / besselap within 1e-10 relative (the Bessel roots come
// from a different method, companion-matrix eigenvalues, so this also
// checks the root finding).
func TestPrototypePolesScipy(t *testing.T) {
	t.Parallel()
	ref := loadReference(t)
	for _, p := range ref.Prototypes {
		name := fmt.Sprintf("%s/ripple=%g/%s/n=%d", p.Approx, p.Ripple, p.Norm, p.Order)
		t.Run(name, func(t *testing.T) {
			a, norm := p.spec()
			got := Prototype(a, p.Order, p.Ripple, norm)
			want := make([]complex128, len(p.Poles))
			for i, z := range p.Poles {
				want[i] = complex(z[0], z[1])
			}
			sortPoles(got)
			sortPoles(want)
			if len(got) != len(want) {
				t.Fatalf("got %d poles %v, scipy %d %v", len(got), got, len(want), want)
			}
			for i := range got {
				if d := cmplx.Abs(got[i]-want[i]) / cmplx.Abs(want[i]); d > 1e-10 {
					t.Errorf("pole %d: got %v, scipy %v (rel. error %.2g)", i, got[i], want[i], d)
				}
			}
		})
	}
}

// TestSectionsScipy checks the sections of designs (low-pass and high-pass,
// edge 1 kHz, default placement) against the w0/Q derived from scipy's poles:
// f0 = fp·w0 for a low-pass, fp/w0 for a high-pass; same Q.
func TestSectionsScipy(t *testing.T) {
	t.Parallel()
	ref := loadReference(t)
	for _, p := range ref.Prototypes {
		a, norm := p.spec()
		if a == Chebyshev && p.Ripple != 0.5 && p.Ripple != 1 && p.Ripple != 3 && p.Ripple != 0.1 {
			continue
		}
		for _, kind := range []Kind{LowPass, HighPass} {
			name := fmt.Sprintf("%s/ripple=%g/%s/n=%d/%s", p.Approx, p.Ripple, p.Norm, p.Order, kind)
			t.Run(name, func(t *testing.T) {
				const fp = 1000
				s := Spec{Kind: kind, Approx: a, Pass: fp, Ripple: p.Ripple, Order: p.Order, BesselNorm: norm, Odd: OddOnePole}
				d, err := NewDesign(s, 0, 0)
				if err != nil {
					t.Fatal(err)
				}
				if len(d.Sections) != len(p.Sections) {
					t.Fatalf("%d sections, scipy %d", len(d.Sections), len(p.Sections))
				}
				for i, sec := range d.Sections {
					rs := p.Sections[i]
					f0 := fp * rs.W0
					if kind == HighPass {
						f0 = fp / rs.W0
					}
					if !testkit.Rel(1e-9).Equal(sec.F0, f0) || !testkit.AbsOrRel(1e-9, 1e-9).Equal(sec.Q, rs.Q) {
						t.Errorf("section %d: f0 %.10g Q %.10g, scipy f0 %.10g Q %.10g", i+1, sec.F0, sec.Q, f0, rs.Q)
					}
				}
			})
		}
	}
}

func (o refOrder) spec() Spec {
	a, _ := ParseApprox(o.Approx)
	k, _ := ParseKind(o.Kind)
	s := Spec{Kind: k, Approx: a, Pass: o.Fp, Stop: o.Fs, StopAtten: o.As}
	if a == Chebyshev {
		s.Ripple = o.Ap
	} else {
		s.PassAtten = o.Ap
	}
	if o.Norm == "delay" {
		s.BesselNorm = BesselDelay
	}
	return s
}

// TestOrdersScipy checks the minimum order over a grid of specifications:
// the closed form against scipy's buttord / cheb1ord, and MinOrder against
// scipy's own order search (which for Chebyshev measures the attenuation
// from the DC gain, as unity-gain sections do, and for Bessel evaluates
// scipy's bessel filters), including the cases no order up to 12 meets.
// The minimum-order design's attenuation at fp and fs must match scipy's
// freqs within 1e-6 dB.
func TestOrdersScipy(t *testing.T) {
	t.Parallel()
	ref := loadReference(t)
	for _, o := range ref.Orders {
		name := fmt.Sprintf("%s/%s/%s/fs=%g/ap=%.4g/as=%g", o.Approx, o.Norm, o.Kind, o.Fs, o.Ap, o.As)
		t.Run(name, func(t *testing.T) {
			s := o.spec()
			if o.Approx != "bessel" {
				ns := s
				if err := ns.Normalize(); err != nil {
					t.Fatal(err)
				}
				raw := closedFormOrder(&ns)
				if got := int(math.Ceil(raw - 1e-9)); got != o.ClosedForm {
					t.Errorf("closed-form order %d (raw %.6f), scipy %d", got, raw, o.ClosedForm)
				}
			}
			n, err := MinOrder(s)
			if o.Order == nil {
				if fault.KindOf(err) != fault.Infeasible {
					t.Fatalf("scipy finds no order up to 12; MinOrder gave %d, %v", n, err)
				}
				return
			}
			if err != nil {
				t.Fatalf("MinOrder: %v (scipy: %d)", err, *o.Order)
			}
			if n != *o.Order {
				t.Fatalf("MinOrder %d, scipy %d", n, *o.Order)
			}
			d, err := NewDesign(s, 0, 0)
			if err != nil {
				t.Fatal(err)
			}
			if got := d.AttenuationAt(o.Fp); !testkit.Abs(1e-6).Equal(got, *o.AttenPass) {
				t.Errorf("attenuation at fp %.9f dB, scipy %.9f", got, *o.AttenPass)
			}
			if got := d.AttenuationAt(o.Fs); !testkit.Abs(1e-6).Equal(got, *o.AttenStop) {
				t.Errorf("attenuation at fs %.9f dB, scipy %.9f", got, *o.AttenStop)
			}
		})
	}
}
