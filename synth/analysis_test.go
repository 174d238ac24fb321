package synth

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"drawerfit/internal/testkit"
)

// TestGroupDelay checks the analytic group delay of every topology against
// a central difference of the unwrapped phase, with random element values.
func TestGroupDelay(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(5, 9))
	for _, top := range Topologies() {
		t.Run(top.id, func(t *testing.T) {
			v := make([]float64, len(top.elements))
			for i, e := range top.elements {
				x := math.Pow(10, rng.Float64()-0.5)
				if e.Kind == Resistor {
					v[i] = 1e4 * x
				} else {
					v[i] = 1e-8 * x
				}
			}
			st := StageOf(top, v)
			for _, f := range logSweep(10, 1e5, 30) {
				w := 2 * math.Pi * f
				const h = 1e-5 // relative step of the central difference
				dphi := cmplx.Phase(st.Response(w*(1+h)) / st.Response(w*(1-h)))
				num := -dphi / (2 * h * w)
				if got := st.GroupDelay(w); !testkit.AbsOrRel(1e-15, 1e-6).Equal(got, num) {
					t.Fatalf("%g Hz: group delay %g s, numerical %g s", f, got, num)
				}
			}
		})
	}
}

// TestSolveReproducesSection checks the topologies' Solve (the fit's inner
// step) on the sections of many designs: capacitors from the default
// scaling, perturbed, and every returned solution must reproduce the
// section denominator; where Solve reports no exact solution, the
// Sallen-Key low-pass must really violate Cf/Cg >= 4Q² (docs/check-values.md, "Section circuits").
func TestSolveReproducesSection(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(8, 2))
	for _, s := range designGrid() {
		t.Run(specName(s), func(t *testing.T) {
			d, err := NewDesign(s, 0, 0)
			if err != nil {
				t.Fatal(err)
			}
			stages, err := d.Scale(Scaling{})
			if err != nil {
				t.Fatal(err)
			}
			for i, sec := range d.Sections {
				top := sec.Topology
				base := stages[i].Values()
				for trial := 0; trial < 5; trial++ {
					caps := make([]float64, len(base))
					for j, e := range top.elements {
						if e.Kind == Capacitor {
							caps[j] = base[j] * math.Pow(2, rng.Float64()-0.5)
						}
					}
					if trial == 0 {
						copy(caps, base)
					}
					sols, ok := top.Solve(caps, sec.Den)
					if trial == 0 && !ok {
						t.Fatalf("section %d: no solution with the scaled design's own capacitors", i+1)
					}
					if !ok {
						if top == SallenKeyLowPass() && caps[2]/caps[3] >= 4*sec.Q*sec.Q*(1+1e-9) {
							t.Errorf("section %d: Cf/Cg = %g ≥ 4Q² = %g but no solution", i+1, caps[2]/caps[3], 4*sec.Q*sec.Q)
						}
						continue
					}
					for _, v := range sols {
						_, den := top.Coeffs(v)
						for k := 1; k <= top.poles; k++ {
							if !testkit.Rel(1e-8).Equal(den[k], sec.Den[k]) {
								t.Fatalf("section %d (%s): solution %v gives den %v, want %v", i+1, top.id, v, den, sec.Den)
							}
						}
						for j, e := range top.elements {
							if v[j] <= 0 || (e.Kind == Capacitor && v[j] != caps[j]) {
								t.Fatalf("section %d: solution %v changes or zeroes element %s (caps %v)", i+1, v, e.Ref, caps)
							}
						}
					}
				}
			}
		})
	}
}
