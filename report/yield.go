package report

import (
	"fmt"
	"math"
	"math/rand/v2"

	"drawerfit/optimize"
	"drawerfit/respplot"
	"drawerfit/synth"
	"drawerfit/tolerance"
)

// YieldFrom turns a yield analysis into what the sheet shows: the yield
// with its confidence interval, trials, seed and distribution, the spread
// of the edge frequency and of the attenuation at fs (5th to 95th
// percentile), each component's share of the failures and the advice. The
// analysis's warnings are not included: put them in Sheet.Warnings. Bands
// are left empty; fill them with Envelope. It returns nil for a nil result.
func YieldFrom(r *tolerance.Result) *YieldSummary {
	if r == nil {
		return nil
	}
	y := &YieldSummary{
		Yield: r.Yield, CILow: r.CILow, CIHigh: r.CIHigh, Trials: r.Trials, Seed: r.Seed,
		Dist: string(r.Dist), Advice: r.Advice, Target: r.TargetYield,
	}
	if r.Edge != nil {
		kind := string(r.EdgeKind)
		if kind == "" {
			kind = "edge frequency"
		}
		y.Facts = append(y.Facts, Fact{kind + ", 5th to 95th percentile", hz(r.Edge.P5) + " to " + hz(r.Edge.P95)})
	}
	if r.StopAtten != nil {
		y.Facts = append(y.Facts, Fact{"Attenuation at fs, 5th to 95th percentile",
			num(r.StopAtten.P5, 3) + " dB to " + num(r.StopAtten.P95, 3) + " dB"})
	}
	for _, b := range r.Blame {
		y.Blame = append(y.Blame, BlameLine{Ref: b.Ref, Section: b.Section, Share: b.Share})
	}
	return y
}

// EnvelopeOptions control Envelope.
type EnvelopeOptions struct {
	// Trials is the number of simulated boards (0 means 1000: enough for
	// the 5th and 95th percentiles to settle to a small fraction of a dB,
	// a judgement, no source).
	Trials int
	// Seed selects the random stream; the same seed gives the same band.
	Seed uint64
	// Normal draws each part from a normal distribution with its tolerance
	// as 3 standard deviations (clipped at the tolerance); otherwise
	// uniformly within the tolerance. These are tolerance.Uniform and
	// tolerance.Normal.
	Normal bool
	// Freq are the frequencies in Hz (nil: 200 points from the plot's range).
	Freq []float64
	// Limits give the plot's range when Freq is nil; zero means the
	// candidate's specification.
	Limits respplot.Limits
}

// Envelope simulates boards of c with every physical part drawn within its
// stock tolerance, combinations built from their drawn parts, and returns
// the 5th to 95th percentile band of the gain for the magnitude plot. It is
// a picture of the spread, not a yield figure: package tolerance judges
// boards against the specification.
func Envelope(c *optimize.Candidate, o EnvelopeOptions) respplot.Band {
	if o.Trials <= 0 {
		o.Trials = 1000
	}
	f := o.Freq
	if f == nil {
		lim := o.Limits
		if lim == (respplot.Limits{}) {
			s := c.Design.Spec
			lim = respplot.Limits{Fp: s.Pass, Ap: s.PassAtten, Fs: s.Stop, As: s.StopAtten}
		}
		r := respplot.Response{Kind: c.Design.Spec.Kind, Limits: lim}
		lo, hi := r.Range()
		f = respplot.LogGrid(lo, hi, 200)
	}
	rng := rand.New(rand.NewPCG(o.Seed, 0x9e3779b97f4a7c15)) // second word: any odd constant
	draw := func(tol float64) float64 {
		if tol <= 0 {
			return 0
		}
		if o.Normal {
			return math.Max(-tol, math.Min(tol, rng.NormFloat64()*tol/3))
		}
		return (2*rng.Float64() - 1) * tol
	}
	stages := c.Stages()
	gains := make([][]float64, o.Trials)
	for t := range gains {
		st := make([]synth.Stage, len(stages))
		for i, sf := range c.Sections {
			pos := make([]synth.Position, len(sf.Components))
			for j, comp := range sf.Components {
				parts := make([]float64, len(comp.Parts))
				for k, p := range comp.Parts {
					parts[k] = p.Value * (1 + draw(p.Tolerance))
				}
				pos[j] = synth.Position{Arrangement: comp.Arrangement, Parts: parts}
			}
			st[i] = synth.Stage{Topology: stages[i].Topology, Positions: pos}
		}
		g := make([]float64, len(f))
		for i, fi := range f {
			g[i] = respplot.GainDB(synth.CascadeResponse(st, 2*math.Pi*fi))
		}
		gains[t] = g
	}
	label := fmt.Sprintf("5th–95th percentile of %d boards", o.Trials)
	return respplot.PercentileBand(label, f, gains, 5, 95)
}
