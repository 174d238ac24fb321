package synth

// Limits are practical ranges of component values in ohms and farads. A
// zero field means no limit on that side.
type Limits struct {
	RMin, RMax float64
	CMin, CMax float64
}

// PracticalLimits is the one set of practical value ranges drawerfit uses
// everywhere: the fit's default search range (optimize.DefaultOptions and
// the fit command's --r-min, --r-max, --c-min, --c-max defaults), the
// plan's default scaling range and its warnings, and the practical checks
// of a fitted design (tolerance.Practical). Because they read the same
// values, the fit never chooses by default a value the checks then warn
// about.
//
// Resistors from 1 kΩ (below, they load the op-amp and the stage before)
// to 470 kΩ (above, noise, bias-current error and stray capacitance start
// to matter); capacitors from 100 pF (below, stray and op-amp input
// capacitance become a noticeable part of the value) to 10 µF. These are
// common practice, no source (docs/check-values.md, "Practical rules"; Op
// Amps for Everyone 16.8.3 recommends the narrower 1 kΩ to 100 kΩ for
// general use).
var PracticalLimits = Limits{RMin: 1e3, RMax: 470e3, CMin: 100e-12, CMax: 10e-6}

// Inside reports whether a value v of kind k lies within the limits.
func (l Limits) Inside(k PartKind, v float64) bool {
	lo, hi := l.RMin, l.RMax
	if k == Capacitor {
		lo, hi = l.CMin, l.CMax
	}
	return (lo == 0 || v >= lo) && (hi == 0 || v <= hi)
}

// LimitIssue is one part of a scaled design outside the limits.
type LimitIssue struct {
	// Stage, Position and Part index the part: stages[Stage].Positions[Position].Parts[Part].
	Stage, Position, Part int
	Kind                  PartKind
	Value                 float64
	// Low is true below the lower limit, false above the upper one.
	Low bool
}

// Outside lists the parts of stages whose values lie outside l, in stage,
// position and part order.
func (l Limits) Outside(stages []Stage) []LimitIssue {
	var out []LimitIssue
	for i, st := range stages {
		for j := range st.Positions {
			k := st.Topology.Element(j).Kind
			lo := l.RMin
			if k == Capacitor {
				lo = l.CMin
			}
			for p, v := range st.Positions[j].Parts {
				if !l.Inside(k, v) {
					out = append(out, LimitIssue{Stage: i, Position: j, Part: p, Kind: k, Value: v, Low: lo > 0 && v < lo})
				}
			}
		}
	}
	return out
}
