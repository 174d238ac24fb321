package tolerance

import (
	"fmt"
	"math"
	"math/cmplx"

	"drawerfit/fault"
	"drawerfit/optimize"
	"drawerfit/synth"
)

// SectionResponse returns H(jω) of one section with element values v at
// angular frequency w with the single-pole amplifier op (nil: ideal). It is
// synth.AmpResponse, the one home of this analysis, which documents the
// model and the method; it panics if len(v) does not match the topology.
func SectionResponse(t *synth.Topology, v []float64, op *synth.OpAmp, w float64) complex128 {
	return synth.AmpResponse(t, v, op, w)
}

// solveAll solves the n×n augmented system m (synth.SolveComplex).
func solveAll(m *[8][9]complex128, n int) [8]complex128 { return synth.SolveComplex(m, n) }

// opampBoard is a nominal board analysed with an op-amp model.
type opampBoard struct {
	b    *board
	vals [][]float64
	op   *synth.OpAmp
	// ref is the cascade's passband |H|² with the amplifier, (A0/(1+A0))^2n:
	// gain2 is measured from it, as the fit measures (0 means 1).
	ref float64
	// fmax, when set, caps the frequencies measured: above it the gain is
	// taken at fmax (a high-pass's pass band judged up to fmax).
	fmax float64
}

func (o *opampBoard) response(omega float64) complex128 {
	h := complex(1, 0)
	for si, s := range o.b.sections {
		h *= SectionResponse(s.topo, o.vals[si], o.op, omega)
	}
	return h
}

func (o *opampBoard) gain2(omega float64) float64 {
	if o.fmax > 0 {
		omega = math.Min(omega, 2*math.Pi*o.fmax)
	}
	h := o.response(omega)
	g := real(h)*real(h) + imag(h)*imag(h)
	if o.ref > 0 {
		g /= o.ref
	}
	return g
}

// HighPassUpperFactor is where a high-pass's pass band is judged up to with
// a real amplifier, as a multiple of fp: 10·fp, the top of the fit's
// scoring grid (one judgement in the fit and the check). Above it the
// amplifier's roll-off, not the filter, sets the response.
const HighPassUpperFactor = 10

// GBWRule returns the op-amp gain-bandwidth a unity-gain section needs by
// the rule of Op Amps for Everyone (Texas Instruments, SLOD006B, section
// 16.8.4) and the rule's text: first order fT >= 100·fc; second order with
// Q > 1 fT = 100·Q·f0·√((Q²-0.5)/(Q²-0.25)) (the book's 100·(fc/a)·... with
// a = 1/(Q·w0)); second order with Q <= 1 the limiting form 100·Q·f0 (the
// book's Q < 1 case as recalled from memory; docs/check-values.md, "Practical
// rules", gives the same rough figure). A 3-pole section needs the larger of its pair's and its
// real pole's figures. f0, realF0 in Hz; poles 1, 2 or 3.
func GBWRule(poles int, f0, q, realF0 float64) (gbw float64, rule string) {
	pair := func() (float64, string) {
		if q > 1 {
			return 100 * q * f0 * math.Sqrt((q*q-0.5)/(q*q-0.25)), "fT >= 100·Q·f0·√((Q²-0.5)/(Q²-0.25)) for Q > 1"
		}
		return 100 * q * f0, "fT >= 100·Q·f0 for Q <= 1"
	}
	switch poles {
	case 1:
		return 100 * f0, "fT >= 100·fc for a first-order section"
	case 2:
		return pair()
	}
	g, r := pair()
	if g2 := 100 * realF0; g2 > g {
		return g2, "fT >= 100·fc of the real pole"
	}
	return g, r
}

// NoiseGain returns the section's noise gain at DC, 1 + Zf/Zi seen from the
// op-amp's inputs: 1 for a follower, K = 1 + Rb/Ra for a Sallen-Key with a
// gain divider, 1 + |G| for a multiple-feedback section of passband gain
// magnitude G. A section with gain needs that many times the follower's
// gain-bandwidth: the closed-loop bandwidth of an amplifier is its GBW over
// its noise gain (common practice; the book's rule is for unity-gain
// sections, so scaling it by the noise gain is our reading, not the
// book's).
func NoiseGain(t *synth.Topology, v []float64) float64 {
	switch {
	case t.Minus() == "out":
		return 1
	case t.Inverting():
		return 1 + math.Abs(t.PassbandGain(v))
	}
	return math.Abs(t.PassbandGain(v))
}

// GBWRuleSource names the published rule in every warning.
const GBWRuleSource = "Op Amps for Everyone, section 16.8.4"

// OpAmpSection is the op-amp check of one section.
type OpAmpSection struct {
	Section  int     `json:"section"` // 1-based
	Topology string  `json:"topology"`
	F0       float64 `json:"f0_hz"`
	Q        float64 `json:"q"`
	RealF0   float64 `json:"real_f0_hz"`
	// RequiredGBW is the gain-bandwidth the rule asks for (Hz), Rule the
	// rule applied and OK whether the op-amp meets it.
	RequiredGBW float64 `json:"required_gbw_hz"`
	Rule        string  `json:"rule"`
	OK          bool    `json:"ok"`
	// ErrorDB is the largest change of the section's own response on the
	// analysis band, dB.
	ErrorDB float64 `json:"error_db"`
}

// OpAmpReport is the analysis of a candidate with a real op-amp.
type OpAmpReport struct {
	GBW    float64 `json:"gbw_hz"`
	DCGain float64 `json:"dc_gain"` // V/V
	// Rule names the source of the gain-bandwidth rule.
	Rule     string         `json:"rule"`
	Sections []OpAmpSection `json:"sections"`
	// BandError is the largest change of the cascade's response the op-amp
	// adds on the analysis band (fp/10 to fs for a low-pass, fs to 10·fp for
	// a high-pass; without fs up to 3·fp or down to fp/3), dB.
	BandError float64 `json:"band_error_db"`
	// PassbandError is the largest change within the passband part of that
	// band, dB.
	PassbandError float64 `json:"passband_error_db"`
	// Ideal and WithOpAmp are the candidate's figures with an ideal and with
	// the modelled op-amp.
	Ideal     Figures `json:"ideal"`
	WithOpAmp Figures `json:"with_opamp"`
	// UpperEdge is, for a high-pass, the frequency above the passband where
	// the op-amp's falling gain brings the response 3 dB down (Hz; 0 for a
	// low-pass or when not found below 1000·GBW).
	UpperEdge float64 `json:"upper_edge_hz"`
	// PassJudgedUpTo is, for a high-pass, the frequency up to which the
	// pass band is judged with the amplifier (Hz; HighPassUpperFactor·fp).
	PassJudgedUpTo float64  `json:"pass_judged_up_to_hz"`
	Warnings       []string `json:"warnings"`
}

// CheckOpAmp analyses candidate c with the single-pole op-amp op in every
// section (see SectionResponse) against spec (zero: the candidate's own),
// reports the response error the op-amp adds and warns for every section
// whose gain-bandwidth is below the rule of GBWRule. Errors: fault.Invalid
// for a non-positive or non-finite gain-bandwidth, a negative gain, a bad
// specification or a malformed candidate.
func CheckOpAmp(c *optimize.Candidate, spec synth.Spec, op synth.OpAmp) (*OpAmpReport, error) {
	if !(op.GBW > 0) || math.IsInf(op.GBW, 0) {
		return nil, fault.Invalidf("the op-amp gain-bandwidth must be a positive frequency, got %g Hz", op.GBW)
	}
	if op.DCGain < 0 || math.IsNaN(op.DCGain) || math.IsInf(op.DCGain, 0) {
		return nil, fault.Invalidf("the op-amp DC gain must be positive, got %g", op.DCGain)
	}
	if op.DCGain == 0 {
		op.DCGain = synth.DefaultDCGain
	}
	spec, b, j, err := prepare(c, spec)
	if err != nil {
		return nil, err
	}
	ws := b.newWorkspace()
	ws.ideal = true // the reference: the same parts with ideal amplifiers
	ws.load(b.nominalParts())
	dc := op.DCFollowerGain()
	// Times the ideal passband gain of sections with gain.
	ref := math.Pow(dc*dc, float64(len(b.sections))) * ws.passGain2()
	ob := &opampBoard{b: b, vals: ws.vals, op: &op, ref: ref}
	rep := &OpAmpReport{GBW: op.GBW, DCGain: op.DCGain, Rule: GBWRuleSource, Warnings: []string{}}

	var none Options
	rep.Ideal = figures(j, j.measure(ws, true), &none)
	// With the amplifier, attenuations are measured from the passband gain
	// it allows, (A0/(1+A0))^n; a high-pass's pass band is judged up to
	// HighPassUpperFactor·fp, as the fit scores it.
	judged := &opampBoard{b: b, vals: ws.vals, op: &op, ref: ref}
	if spec.Kind == synth.HighPass {
		judged.fmax = HighPassUpperFactor * spec.Pass
		rep.PassJudgedUpTo = judged.fmax
	}
	rep.WithOpAmp = figures(j, j.measure(judged, true), &none)

	band := analysisBand(spec)
	for si, s := range b.sections {
		// The rule is applied to the section's target: the parts may be
		// predistorted for the amplifier, so their ideal-amplifier poles
		// are not what the section must give.
		t := c.Sections[si].Target
		os := OpAmpSection{Section: si + 1, Topology: s.topo.ID(), F0: t.F0, Q: t.Q, RealF0: t.RealF0}
		os.RequiredGBW, os.Rule = GBWRule(s.topo.Poles(), os.F0, os.Q, os.RealF0)
		if ng := NoiseGain(s.topo, ws.vals[si]); ng > 1+1e-9 {
			os.RequiredGBW *= ng
			os.Rule += fmt.Sprintf(", times the noise gain %.3g", ng)
		}
		os.OK = op.GBW >= os.RequiredGBW
		num, den := ws.coeffs[si].num, ws.coeffs[si].den
		for _, f := range band {
			w := 2 * math.Pi * f
			ideal := synth.EvalRational(num, den, s.topo.Poles(), w)
			real := SectionResponse(s.topo, ws.vals[si], &op, w)
			os.ErrorDB = math.Max(os.ErrorDB, math.Abs(dbRatio(real, ideal)))
		}
		if !os.OK {
			desc := fmt.Sprintf("f0 %s, Q %.3g", hz(os.F0), os.Q)
			if s.topo.Poles() == 1 {
				desc = fmt.Sprintf("fc %s", hz(os.F0))
			}
			rep.Warnings = append(rep.Warnings, fmt.Sprintf(
				"section %d (%s, %s): the op-amp's gain-bandwidth %s is below the %s asked for by the rule of %s (%s); the op-amp changes this section's response by up to %.2f dB",
				si+1, s.topo.Name(), desc, hz(op.GBW), hz(os.RequiredGBW), GBWRuleSource, os.Rule, os.ErrorDB))
		}
		rep.Sections = append(rep.Sections, os)
	}
	for _, f := range band {
		w := 2 * math.Pi * f
		d := math.Abs(dbRatio(ob.response(w), complexGain(ws, w)))
		rep.BandError = math.Max(rep.BandError, d)
		if x := j.toX(f); x <= 1 {
			rep.PassbandError = math.Max(rep.PassbandError, d)
		}
	}
	if spec.Kind == synth.HighPass {
		// Walk up from fp until the op-amp's roll-off takes the gain 3 dB
		// below its passband value.
		f := spec.Pass
		for ; f < 1000*op.GBW; f *= 1.05 {
			if ob.gain2(2*math.Pi*f) < 0.5 && f > 2*spec.Pass {
				break
			}
		}
		if f < 1000*op.GBW {
			lo, hi := f/1.05, f
			for it := 0; it < 60; it++ {
				m := math.Sqrt(lo * hi)
				if ob.gain2(2*math.Pi*m) < 0.5 {
					hi = m
				} else {
					lo = m
				}
			}
			rep.UpperEdge = math.Sqrt(lo * hi)
			rep.Warnings = append(rep.Warnings, fmt.Sprintf(
				"a high-pass passes only up to the op-amp's bandwidth: with this op-amp the response is 3 dB down again at %s; its pass band is judged from fp up to %s (%d·fp, as the fit scores it)",
				hz(rep.UpperEdge), hz(rep.PassJudgedUpTo), HighPassUpperFactor))
		}
	}
	if rep.Ideal.Pass && !rep.WithOpAmp.Pass {
		s := fmt.Sprintf("with this op-amp the design no longer meets the specification: passband %.3f dB (limit %.4g dB)",
			rep.WithOpAmp.PassAtten, spec.PassAtten)
		if rep.WithOpAmp.StopAtten != nil {
			s += fmt.Sprintf(", %.2f dB at fs (at least %.4g dB)", *rep.WithOpAmp.StopAtten, spec.StopAtten)
		}
		rep.Warnings = append(rep.Warnings, s)
	}
	return rep, nil
}

// complexGain is the ideal cascade response of the loaded workspace.
func complexGain(ws *workspace, w float64) complex128 {
	h := complex(1, 0)
	for i := range ws.coeffs {
		c := &ws.coeffs[i]
		h *= synth.EvalRational(c.num, c.den, c.poles, w)
	}
	return h
}

// dbRatio is 20·log10|a/b|.
func dbRatio(a, b complex128) float64 {
	return 20 * math.Log10(cmplx.Abs(a)/cmplx.Abs(b))
}

// analysisBand is the frequency grid of the op-amp error, 100 points per
// decade (the density of the fit's scoring grid): fp/10 to fs for a
// low-pass, fs to 10·fp for a high-pass; without fs, up to 3·fp (down to
// fp/3). fp and fs are included exactly.
func analysisBand(s synth.Spec) []float64 {
	var lo, hi float64
	if s.Kind == synth.LowPass {
		lo, hi = s.Pass/10, 3*s.Pass
		if s.Stop > 0 {
			hi = s.Stop
		}
	} else {
		lo, hi = s.Pass/3, 10*s.Pass
		if s.Stop > 0 {
			lo = s.Stop
		}
	}
	dec := math.Log10(hi / lo)
	n := int(math.Ceil(dec*100)) + 1
	f := make([]float64, 0, n+1)
	for i := 0; i < n; i++ {
		f = append(f, lo*math.Pow(10, dec*float64(i)/float64(n-1)))
	}
	return append(f, s.Pass)
}
