package synth

import (
	"fmt"
	"math"
	"strings"

	"drawerfit/fault"
)

// Kind is the response type of a filter: low-pass or high-pass.
type Kind uint8

const (
	// LowPass passes frequencies below the edge.
	LowPass Kind = iota
	// HighPass passes frequencies above the edge.
	HighPass
)

// String returns "lowpass" or "highpass".
func (k Kind) String() string {
	if k == HighPass {
		return "highpass"
	}
	return "lowpass"
}

// ParseKind reads "lowpass" or "highpass" (also "low-pass", "lp", "high-pass",
// "hp"; case is ignored). Anything else is a fault.Invalid error.
func ParseKind(s string) (Kind, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "lowpass", "low-pass", "lp":
		return LowPass, nil
	case "highpass", "high-pass", "hp":
		return HighPass, nil
	}
	return 0, fault.Invalidf("unknown response type %q: use lowpass or highpass", s)
}

// Approx is the approximation (the family of the pole pattern).
type Approx uint8

const (
	// Butterworth is maximally flat in the passband.
	Butterworth Approx = iota
	// Chebyshev is Chebyshev type I: equal ripple in the passband.
	Chebyshev
	// Bessel (Thomson) has maximally flat group delay.
	Bessel
)

// String returns "butterworth", "chebyshev" or "bessel".
func (a Approx) String() string {
	switch a {
	case Chebyshev:
		return "chebyshev"
	case Bessel:
		return "bessel"
	case Butterworth:
		return "butterworth"
	}
	return fmt.Sprintf("Approx(%d)", uint8(a))
}

// ParseApprox reads "butterworth", "chebyshev" or "bessel" (case ignored).
// Anything else is a fault.Invalid error.
func ParseApprox(s string) (Approx, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "butterworth":
		return Butterworth, nil
	case "chebyshev":
		return Chebyshev, nil
	case "bessel":
		return Bessel, nil
	}
	return 0, fault.Invalidf("unknown response %q: use butterworth, chebyshev or bessel", s)
}

// Odd says how the real pole of an odd order is built.
type Odd uint8

const (
	// OddDefault (the zero value) means "not chosen": Spec.Normalize turns it
	// into OddOnePole, and NewDesign takes the spec's choice.
	OddDefault Odd = iota
	// OddOnePole builds the real pole as its own buffered RC section.
	OddOnePole
	// OddThreePole combines the real pole with the lowest-Q pair in one
	// single-amplifier 3-pole section.
	OddThreePole
)

// String returns "1pole", "3pole" or "default".
func (o Odd) String() string {
	switch o {
	case OddOnePole:
		return "1pole"
	case OddThreePole:
		return "3pole"
	}
	return "default"
}

// ParseOdd reads "1pole" or "3pole". Anything else is a fault.Invalid error.
func ParseOdd(s string) (Odd, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "1pole", "1-pole":
		return OddOnePole, nil
	case "3pole", "3-pole":
		return OddThreePole, nil
	}
	return 0, fault.Invalidf("unknown odd-order arrangement %q: use 1pole or 3pole", s)
}

// BesselNorm is the frequency normalisation of a Bessel filter.
type BesselNorm uint8

const (
	// BesselMag (the default) puts the attenuation Ap (by default the -3 dB
	// point) exactly at the passband edge.
	BesselMag BesselNorm = iota
	// BesselDelay uses the unit-group-delay prototype with 1 rad/s scaled to
	// the passband edge: the group delay at DC is 1/(2π fp).
	BesselDelay
)

// String returns "mag" or "delay".
func (b BesselNorm) String() string {
	if b == BesselDelay {
		return "delay"
	}
	return "mag"
}

// ParseBesselNorm reads "mag" or "delay". Anything else is a fault.Invalid
// error.
func ParseBesselNorm(s string) (BesselNorm, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "mag":
		return BesselMag, nil
	case "delay":
		return BesselDelay, nil
	}
	return 0, fault.Invalidf("unknown Bessel normalisation %q: use mag or delay", s)
}

// Polarity says whether the filter may invert its signal.
type Polarity uint8

const (
	// PolarityAny allows inverting sections; the result says whether the
	// whole filter inverts.
	PolarityAny Polarity = iota
	// PolarityKeep requires a non-inverting filter: an even number of
	// inverting sections (none, or two, ...).
	PolarityKeep
)

// String returns "any" or "keep".
func (p Polarity) String() string {
	if p == PolarityKeep {
		return "keep"
	}
	return "any"
}

// ParsePolarity reads "any" or "keep". Anything else is a fault.Invalid
// error.
func ParsePolarity(s string) (Polarity, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "any":
		return PolarityAny, nil
	case "keep":
		return PolarityKeep, nil
	}
	return 0, fault.Invalidf("unknown polarity %q: use any or keep", s)
}

// TopologyChoice says which circuit family builds the 2-pole sections.
type TopologyChoice uint8

const (
	// TopologyAuto lets the fit choose per section (by its ranking); a
	// plan without stock uses Sallen-Key.
	TopologyAuto TopologyChoice = iota
	// TopologySallenKey builds every 2-pole section as a Sallen-Key
	// (unity gain, or with gain K = 1 + Rb/Ra).
	TopologySallenKey
	// TopologyMFB builds every 2-pole section as a multiple-feedback circuit
	// (inverting).
	TopologyMFB
)

// String returns "auto", "sallen-key" or "mfb".
func (c TopologyChoice) String() string {
	switch c {
	case TopologySallenKey:
		return "sallen-key"
	case TopologyMFB:
		return "mfb"
	}
	return "auto"
}

// ParseTopologyChoice reads "auto", "sallen-key" or "mfb" (also "sk",
// "multiple-feedback"). Anything else is a fault.Invalid error.
func ParseTopologyChoice(s string) (TopologyChoice, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "auto":
		return TopologyAuto, nil
	case "sallen-key", "sk":
		return TopologySallenKey, nil
	case "mfb", "multiple-feedback":
		return TopologyMFB, nil
	}
	return 0, fault.Invalidf("unknown topology %q: use auto, sallen-key or mfb", s)
}

// MaxGainDB is the largest passband gain a specification may ask for, dB.
const MaxGainDB = 40

// MaxOrder is the highest filter order drawerfit designs.
const MaxOrder = 12

// HalfPowerDB is 10·log10(2) ≈ 3.0103 dB, the attenuation at the -3 dB point
// and the default Ap for Butterworth and Bessel (docs/check-values.md, "Conventions").
var HalfPowerDB = 10 * math.Log10(2)

// DefaultRipple is the Chebyshev passband ripple used when neither a ripple
// nor a passband attenuation is given (common practice, no source).
const DefaultRipple = 1.0

// Spec is a filter specification. Frequencies are in hertz, attenuations in
// positive dB relative to the passband gain.
type Spec struct {
	Kind      Kind
	Approx    Approx
	Pass      float64 // fp: passband edge, Hz
	PassAtten float64 // Ap: most attenuation allowed at fp, dB; 0 means the default
	Stop      float64 // fs: stopband edge, Hz; 0 means none (then Order is required)
	StopAtten float64 // As: least attenuation required at fs, dB
	Ripple    float64 // Chebyshev passband ripple, dB; 0 means Ap or the default
	Order     int     // 0 means the minimum order that meets the stopband
	Odd       Odd     // arrangement of the real pole of an odd order
	// BesselNorm is the Bessel frequency normalisation (ignored otherwise).
	BesselNorm BesselNorm
	// Placement says where the target sits within the specification: the
	// zero value PlaceEdge is the classical placement, PlaceInside centres
	// it when the order leaves slack. The specification itself (fp, Ap, fs,
	// As) is what every candidate is judged against either way.
	Placement Placement
	// GainDB is the passband gain in dB, 0..MaxGainDB: at DC for a
	// low-pass, at high frequencies for a high-pass. It is shared between
	// the 2-pole sections (see Design.Sections and the package doc).
	GainDB float64
	// Polarity says whether the filter may invert.
	Polarity Polarity
	// Topology says which family builds the 2-pole sections.
	Topology TopologyChoice
}

// Gain returns the passband gain magnitude in V/V: 10^(GainDB/20).
func (s *Spec) Gain() float64 { return math.Pow(10, s.GainDB/20) }

func finitePositive(x float64) bool { return x > 0 && !math.IsInf(x, 1) }

// Normalize fills the defaults of s and checks it. Ap defaults to 3.0103 dB
// for Butterworth and Bessel; for Chebyshev Ap is the ripple (either field may
// be given; the ripple defaults to DefaultRipple). Odd defaults to
// OddOnePole. Every problem is a fault.Invalid error with a message naming
// the offending value: non-positive or non-finite numbers, fs on the wrong
// side of fp, As <= Ap, a ripple without Chebyshev, an order outside 1..12,
// and a specification with neither a stopband nor an order.
func (s *Spec) Normalize() error {
	if s.Kind != LowPass && s.Kind != HighPass {
		return fault.Invalidf("unknown response type %d", s.Kind)
	}
	if s.Approx > Bessel {
		return fault.Invalidf("unknown approximation %d", s.Approx)
	}
	if s.Placement > PlaceInside {
		return fault.Invalidf("unknown placement %d", s.Placement)
	}
	if s.BesselNorm > BesselDelay {
		return fault.Invalidf("unknown Bessel normalisation %d", s.BesselNorm)
	}
	if s.Polarity > PolarityKeep {
		return fault.Invalidf("unknown polarity %d", s.Polarity)
	}
	if s.Topology > TopologyMFB {
		return fault.Invalidf("unknown topology choice %d", s.Topology)
	}
	if !(s.GainDB >= 0 && s.GainDB <= MaxGainDB) {
		return fault.Invalidf("passband gain must be 0..%d dB, got %g dB", MaxGainDB, s.GainDB)
	}
	if !finitePositive(s.Pass) {
		return fault.Invalidf("passband edge must be a positive finite frequency, got %g Hz", s.Pass)
	}
	if s.PassAtten < 0 || math.IsNaN(s.PassAtten) || math.IsInf(s.PassAtten, 0) {
		return fault.Invalidf("passband attenuation must be a positive finite number of dB, got %g", s.PassAtten)
	}
	if s.Ripple < 0 || math.IsNaN(s.Ripple) || math.IsInf(s.Ripple, 0) {
		return fault.Invalidf("ripple must be a positive finite number of dB, got %g", s.Ripple)
	}
	if s.Ripple != 0 && s.Approx != Chebyshev {
		return fault.Invalidf("a ripple (%g dB) only applies to a Chebyshev response, not %s", s.Ripple, s.Approx)
	}
	switch s.Approx {
	case Chebyshev:
		switch {
		case s.Ripple == 0 && s.PassAtten == 0:
			s.Ripple = DefaultRipple
		case s.Ripple == 0:
			s.Ripple = s.PassAtten
		case s.PassAtten != 0 && s.PassAtten != s.Ripple:
			return fault.Invalidf("for a Chebyshev response the passband attenuation is the ripple: got ripple %g dB and passband attenuation %g dB", s.Ripple, s.PassAtten)
		}
		s.PassAtten = s.Ripple
	default:
		if s.PassAtten == 0 {
			s.PassAtten = HalfPowerDB
		}
	}
	if s.Stop != 0 || s.StopAtten != 0 {
		if !finitePositive(s.Stop) {
			return fault.Invalidf("stopband edge must be a positive finite frequency, got %g Hz", s.Stop)
		}
		if !finitePositive(s.StopAtten) {
			if s.StopAtten == 0 {
				return fault.Invalidf("a stopband edge needs its minimum attenuation (--atten)")
			}
			return fault.Invalidf("stopband attenuation must be a positive finite number of dB, got %g", s.StopAtten)
		}
		if s.Kind == LowPass && s.Stop <= s.Pass {
			return fault.Invalidf("for a low-pass the stopband edge (%g Hz) must be above the passband edge (%g Hz)", s.Stop, s.Pass)
		}
		if s.Kind == HighPass && s.Stop >= s.Pass {
			return fault.Invalidf("for a high-pass the stopband edge (%g Hz) must be below the passband edge (%g Hz)", s.Stop, s.Pass)
		}
		if s.StopAtten <= s.PassAtten {
			return fault.Invalidf("stopband attenuation (%.6g dB) must exceed the passband attenuation (%.6g dB)", s.StopAtten, s.PassAtten)
		}
	}
	if s.Order != 0 && (s.Order < 1 || s.Order > MaxOrder) {
		return fault.Invalidf("order %d is outside 1..%d", s.Order, MaxOrder)
	}
	if s.Order == 0 && s.Stop == 0 {
		return fault.Invalidf("give a stopband edge with its attenuation, or an order")
	}
	switch s.Odd {
	case OddDefault:
		s.Odd = OddOnePole
	case OddOnePole, OddThreePole:
	default:
		return fault.Invalidf("unknown odd-order arrangement %d", s.Odd)
	}
	return nil
}

// stopRatio returns fs/fp on the low-pass prototype's axis: fs/fp for a
// low-pass, fp/fs for a high-pass (s -> 1/s mirrors frequencies about fp).
func (s *Spec) stopRatio() float64 {
	if s.Kind == HighPass {
		return s.Pass / s.Stop
	}
	return s.Stop / s.Pass
}
