package synth

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// OpAmp is a single-pole op-amp model for netlists: A(s) = A0 / (1 + s/ωa)
// with ωa = 2π·GBW/A0.
type OpAmp struct {
	DCGain float64 // A0, V/V; 0 means DefaultDCGain
	GBW    float64 // gain-bandwidth product, Hz; 0 means no pole (flat gain A0)
}

// DefaultDCGain is the op-amp open-loop DC gain used when OpAmp.DCGain is 0:
// 100 dB, typical of general-purpose op-amps (common practice, no source).
const DefaultDCGain = 1e5

// IdealGain is the gain of the E element that models an ideal op-amp as a
// follower: the closed-loop gain is 1/(1+1/IdealGain), an error of
// 8.7e-9 dB, far inside the 1e-6 dB agreement the tests demand between the
// closed form and the nodal analysis of a netlist.
const IdealGain = 1e12

// IdealAmpGain is the E-element gain that models an ideal op-amp in a stage
// that is not a follower (a gain divider or a virtual-ground input): the
// closed-loop error is about 8.7·NG/IdealAmpGain dB for a noise gain NG,
// below 1e-5 dB up to NG = 1000. It is lower than IdealGain because
// ngspice loses digits with a gain of 1e12 inside a divider loop (measured:
// 0.009 dB off the exact nodal solution of a 12 dB Sallen-Key high-pass,
// smooth at 1e9).
const IdealAmpGain = 1e9

// NetlistOptions controls Netlist.
type NetlistOptions struct {
	Title string // first (title) line; empty gives "drawerfit filter"
	// FStart and FStop bound the .ac sweep in Hz; PointsPerDecade is its
	// density (0 means 20). FStart or FStop 0: two decades either side of
	// the stages' natural frequencies.
	FStart, FStop   float64
	PointsPerDecade int
	// OpAmp is the op-amp model; nil means ideal (an E element with gain
	// IdealGain).
	OpAmp *OpAmp
	// AmpRefs names each stage's amplifier (U1A, U1B, ...); the instance is
	// "X" + the name. Nil means XU1, XU2, ... by stage.
	AmpRefs []string
	// AmpLabel is the amplifier's own name, written in a comment.
	AmpLabel string
	// Refs names each physical part (stage, element index in Elements
	// order and part index, all from 0). Nil means DefaultRefs(stages). A
	// name that does not begin with its SPICE letter (R or C) gets it
	// prepended.
	Refs func(stage, elem, part int) string
	// IdealGain, when not 0, is the E-element gain of every ideal op-amp
	// (OpAmp nil); 0 means IdealGain for followers and IdealAmpGain for the
	// other stages. Exactness checks against the closed form set it high.
	IdealGain float64
}

// opAmpSubckt is the name of the netlist's op-amp subcircuit.
const opAmpSubckt = "DFOPAMP"

// DefaultRefs returns designators numbered through the cascade per kind:
// R1, R2, ... and C1, C2, ..., in stage order, element order and part order.
// Plan output and netlists use the same names.
func DefaultRefs(stages []Stage) func(stage, elem, part int) string {
	names := make([][][]string, len(stages))
	nr, nc := 0, 0
	for i, st := range stages {
		names[i] = make([][]string, len(st.Positions))
		for j, p := range st.Positions {
			for range p.Parts {
				var n string
				if st.Topology.elements[j].Kind == Resistor {
					nr++
					n = "R" + strconv.Itoa(nr)
				} else {
					nc++
					n = "C" + strconv.Itoa(nc)
				}
				names[i][j] = append(names[i][j], n)
			}
		}
	}
	return func(stage, elem, part int) string { return names[stage][elem][part] }
}

// spiceNum formats a value so that it reads back exactly (shortest
// round-trip form, no SPICE suffix to misread).
func spiceNum(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

// Netlist writes a SPICE-compatible netlist of the cascade using only R, C,
// V and E elements (and, with an op-amp gain-bandwidth, one subcircuit made
// of those): the input node "in" is driven by "V1 in 0 AC 1", the output
// node is "out", ground is "0"; each physical part is one element (a value
// made of two parts in series is two elements with a node between them);
// internal nodes are prefixed per stage (s1_a, s2_p, ...); an ".ac dec" line
// covers the band and ".end" ends it. It panics on an empty cascade.
func Netlist(stages []Stage, o NetlistOptions) string {
	if len(stages) == 0 {
		panic("synth: Netlist of no stages")
	}
	refs := o.Refs
	if refs == nil {
		refs = DefaultRefs(stages)
	}
	title := o.Title
	if title == "" {
		title = "drawerfit filter"
	}
	ppd := o.PointsPerDecade
	if ppd <= 0 {
		ppd = 20
	}
	fstart, fstop := o.FStart, o.FStop
	if fstart <= 0 || fstop <= 0 {
		lo, hi := math.Inf(1), 0.0
		for _, st := range stages {
			for _, f := range stageFreqs(st) {
				lo, hi = math.Min(lo, f), math.Max(hi, f)
			}
		}
		if fstart <= 0 {
			fstart = decadeFloor(lo / 100)
		}
		if fstop <= 0 {
			fstop = decadeCeil(hi * 100)
		}
	}
	var b strings.Builder
	w := func(format string, args ...any) { fmt.Fprintf(&b, format+"\n", args...) }
	w("* %s", strings.ReplaceAll(title, "\n", " "))
	followers := true
	for _, st := range stages {
		followers = followers && st.Topology.minus == "out"
	}
	if followers {
		w("* written by drawerfit: only R, C, V and E elements; op-amps as unity followers")
	} else {
		w("* written by drawerfit: only R, C, V and E elements; each op-amp amplifies its + input minus its - input")
	}
	var a0, fa float64
	if o.OpAmp != nil {
		a0 = o.OpAmp.DCGain
		if a0 == 0 {
			a0 = DefaultDCGain
		}
		if o.OpAmp.GBW > 0 {
			fa = o.OpAmp.GBW / a0
			if o.AmpLabel != "" {
				w("* amplifier: %s", strings.ReplaceAll(o.AmpLabel, "\n", " "))
			}
			w("* op-amp: DC gain %s V/V, gain-bandwidth %s Hz (single pole at %s Hz)", spiceNum(a0), spiceNum(o.OpAmp.GBW), spiceNum(fa))
			w(".subckt %s inp inn out", opAmpSubckt)
			w("Egain g 0 inp inn %s", spiceNum(a0))
			w("Rpole g pole 1000")
			w("Cpole pole 0 %s", spiceNum(1/(2*math.Pi*fa*1000)))
			w("Ebuf out 0 pole 0 1")
			w(".ends %s", opAmpSubckt)
		} else {
			w("* op-amp: DC gain %s V/V, no pole", spiceNum(a0))
		}
	}
	w("V1 in 0 AC 1")
	input := "in"
	for i, st := range stages {
		t := st.Topology
		output := fmt.Sprintf("s%d_out", i+1)
		if i == len(stages)-1 {
			output = "out"
		}
		node := func(n string) string {
			switch n {
			case "in":
				return input
			case "out":
				return output
			case "0":
				return "0"
			}
			return fmt.Sprintf("s%d_%s", i+1, n)
		}
		vals := st.Values()
		w("* stage %d: %s", i+1, t.name)
		for j, e := range t.elements {
			p := st.Positions[j]
			letter := "R"
			if e.Kind == Capacitor {
				letter = "C"
			}
			name := func(k int) string {
				n := refs(i, j, k)
				if !strings.HasPrefix(strings.ToUpper(n), letter) {
					n = letter + n
				}
				return n
			}
			from, to := node(e.From), node(e.To)
			if len(p.Parts) > 1 {
				// Name the parts as the netlist does (their designators), not
				// by the topology's own element names.
				parts := make([]string, len(p.Parts))
				for k := range p.Parts {
					parts[k] = name(k)
				}
				w("* %s = %s: %d parts in %s", strings.Join(parts, " + "), strconv.FormatFloat(vals[j], 'g', 6, 64), len(p.Parts), p.Arrangement)
			}
			if p.Arrangement == Series && len(p.Parts) > 1 {
				prev := from
				for k, v := range p.Parts {
					next := to
					if k < len(p.Parts)-1 {
						next = fmt.Sprintf("s%d_%s_%d", i+1, strings.ToLower(e.Ref), k+1)
					}
					w("%s %s %s %s", name(k), prev, next, spiceNum(v))
					prev = next
				}
				continue
			}
			for k, v := range p.Parts {
				w("%s %s %s %s", name(k), from, to, spiceNum(v))
			}
		}
		plus, minus := node(t.plus), node(t.minus)
		switch {
		case o.OpAmp == nil:
			g := o.IdealGain
			switch {
			case g != 0:
			case t.minus == "out":
				g = IdealGain
			default:
				g = IdealAmpGain
			}
			w("E%d %s 0 %s %s %s", i+1, output, plus, minus, spiceNum(g))
		case fa > 0:
			ref := fmt.Sprintf("U%d", i+1)
			if i < len(o.AmpRefs) {
				ref = o.AmpRefs[i]
			}
			w("X%s %s %s %s %s", ref, plus, minus, output, opAmpSubckt)
		default:
			w("E%d %s 0 %s %s %s", i+1, output, plus, minus, spiceNum(a0))
		}
		input = output
	}
	w(".ac dec %d %s %s", ppd, spiceNum(fstart), spiceNum(fstop))
	w(".end")
	return b.String()
}

// stageFreqs returns the natural frequencies in Hz of a stage's poles.
func stageFreqs(st Stage) []float64 {
	_, den := st.Topology.Coeffs(st.Values())
	switch st.Topology.poles {
	case 1:
		return []float64{1 / (2 * math.Pi * den[1])}
	case 2:
		return []float64{1 / (2 * math.Pi * math.Sqrt(den[2]))}
	}
	return []float64{1 / (2 * math.Pi * math.Cbrt(den[3]))}
}

func decadeFloor(x float64) float64 { return math.Pow(10, math.Floor(math.Log10(x))) }
func decadeCeil(x float64) float64  { return math.Pow(10, math.Ceil(math.Log10(x))) }

// Band returns a sweep range in Hz covering the design's specification: a
// decade below the lower and above the higher of fp and fs, on decade
// boundaries.
func (d *Design) Band() (fstart, fstop float64) {
	lo, hi := d.Spec.Pass, d.Spec.Pass
	if d.Spec.Stop > 0 {
		lo, hi = math.Min(lo, d.Spec.Stop), math.Max(hi, d.Spec.Stop)
	}
	return decadeFloor(lo / 10), decadeCeil(hi * 10)
}
