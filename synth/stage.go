package synth

import (
	"fmt"
	"math"
	"math/cmplx"

	"drawerfit/fault"
)

// Position says how one element of a topology is made of physical parts:
// one part (Single), or two or more in Series or Parallel. Values in ohms or
// farads.
type Position struct {
	Arrangement Arrangement
	Parts       []float64
}

// Stage is a section built from actual parts: a topology and, for each of
// its elements (in Elements order), the parts that make it.
type Stage struct {
	Topology  *Topology
	Positions []Position
}

// StageOf returns a stage whose every element is a single part of the given
// value (ohms, farads, in Elements order). It panics if len(v) does not
// match the topology.
func StageOf(t *Topology, v []float64) Stage {
	if len(v) != len(t.elements) {
		panic("synth: wrong number of element values for " + t.id)
	}
	st := Stage{Topology: t, Positions: make([]Position, len(v))}
	for i, x := range v {
		st.Positions[i] = Position{Arrangement: Single, Parts: []float64{x}}
	}
	return st
}

// Values returns the effective value of each element (ohms, farads, in
// Elements order), combining series and parallel parts.
func (s Stage) Values() []float64 {
	v := make([]float64, len(s.Positions))
	for i, p := range s.Positions {
		v[i] = s.Topology.elements[i].Kind.Combine(p.Arrangement, p.Parts...)
	}
	return v
}

// Response returns the stage's exact transfer function H(jw) at angular
// frequency w (rad/s) from the topology's closed form, with an ideal op-amp.
func (s Stage) Response(w float64) complex128 { return s.Topology.Eval(s.Values(), w) }

// GroupDelay returns the stage's group delay in seconds at angular frequency w.
func (s Stage) GroupDelay(w float64) float64 {
	num, den := s.Topology.Coeffs(s.Values())
	return GroupDelayRational(num, den, s.Topology.poles, w)
}

// CascadeResponse returns the product of the stages' responses at angular
// frequency w: the whole buffered cascade, ideal op-amps.
func CascadeResponse(stages []Stage, w float64) complex128 {
	h := complex(1, 0)
	for _, s := range stages {
		h *= s.Response(w)
	}
	return h
}

// CascadeGroupDelay returns the group delay in seconds of the cascade at
// angular frequency w.
func CascadeGroupDelay(stages []Stage, w float64) float64 {
	var t float64
	for _, s := range stages {
		t += s.GroupDelay(w)
	}
	return t
}

// GroupDelayRational returns the group delay -d arg H(jw)/dw in seconds of
// H = N/D of degree n at angular frequency w: with s = jw,
// τ = Re(D'(s)/D(s)) - Re(N'(s)/N(s)). A numerator that is a power of s
// contributes nothing.
func GroupDelayRational(num, den Poly, n int, w float64) float64 {
	s := complex(0, w)
	ratio := func(c Poly) complex128 {
		var p, dp complex128
		for i := n; i >= 0; i-- {
			dp = dp*s + p
			p = p*s + complex(c[i], 0)
		}
		return dp / p
	}
	return real(ratio(den)) - real(ratio(num))
}

// MagnitudeDB returns 20·log10|h|.
func MagnitudeDB(h complex128) float64 { return 20 * math.Log10(cmplx.Abs(h)) }

// PhaseDeg returns the phase of h in degrees, in (-180, 180].
func PhaseDeg(h complex128) float64 { return cmplx.Phase(h) * 180 / math.Pi }

// Scaling chooses the impedance level of each section when a design is
// turned into component values by the classical hand procedure.
type Scaling struct {
	// Anchor is the value in farads given to each section's largest
	// capacitor; 0 chooses the impedance so that the resistors sit in the
	// geometric middle of RMin..RMax.
	Anchor float64
	// RMin and RMax are the allowed resistor range in ohms; 0 means the
	// practical limits, PracticalLimits.RMin and RMax.
	RMin, RMax float64
}

// Normalised returns the element values of section i normalised to the
// design's passband edge at 1 rad/s, with unit resistors for a low-pass and
// unit capacitors for a high-pass, in the topology's Elements order: the
// values printed in handbook tables. It panics for an index out of range.
// Errors: fault.Infeasible when the section has no positive realisation.
func (d *Design) Normalised(i int) ([]float64, error) {
	sec := &d.Sections[i]
	v, ok := sec.Topology.NormalisedGain(d.normalisedDen(sec.Den), sec.Gain)
	if !ok {
		return nil, fault.Infeasiblef("section %d (%s) has no positive normalised element values", i+1, sec.Topology.name)
	}
	return v, nil
}

// Scale turns the design into component values by frequency scaling with
// kf = 2π·fp and, per section, impedance scaling kz: R' = kz·R,
// C' = C/(kf·kz) (docs/check-values.md, "Scaling"). With an anchor, kz makes the
// section's largest capacitor equal to it; without, kz puts the geometric
// middle of the section's resistors at sqrt(RMin·RMax). Errors: fault.Invalid
// for a non-positive or non-finite anchor or range, fault.Infeasible from
// Normalised.
func (d *Design) Scale(sc Scaling) ([]Stage, error) {
	if sc.RMin == 0 {
		sc.RMin = PracticalLimits.RMin
	}
	if sc.RMax == 0 {
		sc.RMax = PracticalLimits.RMax
	}
	if !finitePositive(sc.RMin) || !finitePositive(sc.RMax) || sc.RMin > sc.RMax {
		return nil, fault.Invalidf("resistor range %g..%g Ω is not a positive range", sc.RMin, sc.RMax)
	}
	if sc.Anchor < 0 || math.IsNaN(sc.Anchor) || math.IsInf(sc.Anchor, 0) {
		return nil, fault.Invalidf("anchor capacitor must be a positive finite value, got %g F", sc.Anchor)
	}
	kf := d.edgeW
	stages := make([]Stage, len(d.Sections))
	for i := range d.Sections {
		v, err := d.Normalised(i)
		if err != nil {
			return nil, err
		}
		t := d.Sections[i].Topology
		var kz, cmax float64
		if sc.Anchor > 0 {
			for j, e := range t.elements {
				if e.Kind == Capacitor {
					cmax = math.Max(cmax, v[j])
				}
			}
			kz = cmax / (kf * sc.Anchor)
		} else {
			rmin, rmax := math.Inf(1), 0.0
			for j, e := range t.elements {
				if e.Kind == Resistor {
					rmin, rmax = math.Min(rmin, v[j]), math.Max(rmax, v[j])
				}
			}
			kz = math.Sqrt(sc.RMin*sc.RMax) / math.Sqrt(rmin*rmax)
		}
		out := make([]float64, len(v))
		for j, e := range t.elements {
			switch {
			case e.Kind == Resistor:
				out[j] = v[j] * kz
			case sc.Anchor > 0:
				// The same as C/(kf·kz), written so that the anchored
				// capacitor gets the anchor value exactly.
				out[j] = sc.Anchor * (v[j] / cmax)
			default:
				out[j] = v[j] / (kf * kz)
			}
		}
		stages[i] = StageOf(t, out)
	}
	return stages, nil
}

// String describes a stage briefly, for messages and debugging.
func (s Stage) String() string {
	v := s.Values()
	out := s.Topology.id
	for i, e := range s.Topology.elements {
		unit := "Ω"
		if e.Kind == Capacitor {
			unit = "F"
		}
		out += fmt.Sprintf(" %s=%s", e.Ref, siString(v[i], unit))
	}
	return out
}
