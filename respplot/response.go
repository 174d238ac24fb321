package respplot

import (
	"fmt"
	"math"
	"math/cmplx"
	"sort"

	"drawerfit/synth"
	"drawerfit/tolerance"
)

// Limits are the specification's edges and attenuations, drawn on the
// magnitude plot. Attenuations are positive dB (docs/check-values.md, "Conventions").
type Limits struct {
	Fp float64 // passband edge, Hz (required)
	Ap float64 // most attenuation allowed at and inside fp, dB
	Fs float64 // stopband edge, Hz; 0 when the specification has none
	As float64 // least attenuation required at and beyond fs, dB
}

// Band is a Monte Carlo envelope of the magnitude response: at each
// frequency, a low and a high percentile of the gain over the trials.
type Band struct {
	Label string    // for the legend, e.g. "5th–95th percentile, 2000 boards"
	Freq  []float64 // Hz, ascending
	Lo    []float64 // gain in dB at Freq (the lower percentile)
	Hi    []float64 // gain in dB at Freq (the upper percentile)
}

// Response is what the plots show. Target is required; the rest is
// optional.
type Response struct {
	Kind synth.Kind
	// Target is the ideal transfer function H(jω), ω in rad/s, with unity
	// passband gain.
	Target func(w float64) complex128
	// Nominal is the candidate's transfer function with nominal part values;
	// nil when there is no candidate.
	Nominal func(w float64) complex128
	Limits  Limits
	// Bands are Monte Carlo envelopes, widest first.
	Bands []Band
	// FMin and FMax bound the frequency axis in Hz; zero means chosen from
	// the limits (see Range).
	FMin, FMax float64
}

// pointsPerDecade is the sampling density of the plotted curves: smooth at
// print resolution (200 points per decade; a choice of this package).
const pointsPerDecade = 200

// Validate reports a Response that cannot be drawn.
func (r *Response) Validate() error {
	if r.Target == nil {
		return fmt.Errorf("respplot: no target response")
	}
	if !(r.Limits.Fp > 0) || math.IsInf(r.Limits.Fp, 0) {
		return fmt.Errorf("respplot: passband edge %g Hz is not a positive frequency", r.Limits.Fp)
	}
	if r.Limits.Fs < 0 || math.IsNaN(r.Limits.Fs) || math.IsInf(r.Limits.Fs, 0) {
		return fmt.Errorf("respplot: stopband edge %g Hz is not a frequency", r.Limits.Fs)
	}
	for _, b := range r.Bands {
		if len(b.Freq) != len(b.Lo) || len(b.Freq) != len(b.Hi) {
			return fmt.Errorf("respplot: band %q has %d frequencies, %d low and %d high values",
				b.Label, len(b.Freq), len(b.Lo), len(b.Hi))
		}
		for i, f := range b.Freq {
			if !(f > 0) || (i > 0 && f <= b.Freq[i-1]) {
				return fmt.Errorf("respplot: band %q frequencies must be positive and ascending", b.Label)
			}
		}
	}
	if r.FMin < 0 || r.FMax < 0 || (r.FMin > 0 && r.FMax > 0 && r.FMin >= r.FMax) {
		return fmt.Errorf("respplot: frequency range %g to %g Hz is empty", r.FMin, r.FMax)
	}
	return nil
}

// Range returns the frequency axis bounds in Hz. Unless FMin and FMax are
// set it spans the fit's scoring range (optimize: fp/10 to fs for a
// low-pass, fs to 10·fp for a high-pass) widened by a factor of 3 on the
// stopband side so the slope beyond fs shows; without fs, a decade each
// side of fp.
func (r *Response) Range() (lo, hi float64) {
	fp, fs := r.Limits.Fp, r.Limits.Fs
	if r.Kind == synth.HighPass {
		lo, hi = fp/10, fp*10
		if fs > 0 && fs < fp {
			lo = fs / 3
		}
	} else {
		lo, hi = fp/10, fp*10
		if fs > fp {
			hi = fs * 3
		}
	}
	if r.FMin > 0 {
		lo = r.FMin
	}
	if r.FMax > 0 {
		hi = r.FMax
	}
	if hi <= lo {
		hi = lo * 10
	}
	return lo, hi
}

// LogGrid returns n >= 2 frequencies from lo to hi, evenly spaced on a
// logarithmic axis, ends included.
func LogGrid(lo, hi float64, n int) []float64 {
	if n < 2 {
		n = 2
	}
	f := make([]float64, n)
	r := math.Log(hi / lo)
	for i := range f {
		f[i] = lo * math.Exp(r*float64(i)/float64(n-1))
	}
	f[n-1] = hi
	return f
}

// grid returns the plotting frequencies of r.
func (r *Response) grid() []float64 {
	lo, hi := r.Range()
	n := int(math.Ceil(math.Log10(hi/lo)*pointsPerDecade)) + 1
	return LogGrid(lo, hi, n)
}

// GainDB returns 20·log10|h|.
func GainDB(h complex128) float64 { return 20 * math.Log10(cmplx.Abs(h)) }

// Sample evaluates h at the frequencies f (Hz) and returns the gain in dB,
// the phase in degrees (unwrapped along f, starting in (-180°, 180°]) and
// the group delay in seconds (-dφ/dω by a central difference of relative
// width 1e-5, taken as the angle of a ratio so that it never wraps).
func Sample(h func(w float64) complex128, f []float64) (gain, phase, delay []float64) {
	gain = make([]float64, len(f))
	phase = make([]float64, len(f))
	delay = make([]float64, len(f))
	const rel = 1e-5 // central-difference step relative to ω: well above rounding, well below curvature
	prev := 0.0
	for i, fi := range f {
		w := 2 * math.Pi * fi
		v := h(w)
		gain[i] = GainDB(v)
		p := cmplx.Phase(v) * 180 / math.Pi
		if i > 0 {
			for p-prev > 180 {
				p -= 360
			}
			for p-prev < -180 {
				p += 360
			}
		}
		phase[i], prev = p, p
		w1, w2 := w*(1-rel), w*(1+rel)
		delay[i] = -cmplx.Phase(h(w2)/h(w1)) / (w2 - w1)
	}
	return gain, phase, delay
}

// PercentileBand returns the band between the pLo and pHi percentiles
// (0 < pLo < pHi < 100) of the gain curves of Monte Carlo trials: gains[t][i]
// is trial t's gain in dB at freq[i]. Percentiles interpolate linearly
// between order statistics (type 7 of Hyndman and Fan, the default of R and
// NumPy). NaN gains are skipped. It panics if a trial's length differs from
// len(freq) or the percentiles are out of order.
func PercentileBand(label string, freq []float64, gains [][]float64, pLo, pHi float64) Band {
	if !(0 < pLo && pLo < pHi && pHi < 100) {
		panic("respplot: PercentileBand needs 0 < pLo < pHi < 100")
	}
	b := Band{Label: label, Freq: append([]float64(nil), freq...),
		Lo: make([]float64, len(freq)), Hi: make([]float64, len(freq))}
	col := make([]float64, 0, len(gains))
	for i := range freq {
		col = col[:0]
		for _, g := range gains {
			if len(g) != len(freq) {
				panic("respplot: PercentileBand trial length differs from the frequencies")
			}
			if !math.IsNaN(g[i]) {
				col = append(col, g[i])
			}
		}
		sort.Float64s(col)
		b.Lo[i], b.Hi[i] = tolerance.Quantile(col, pLo/100), tolerance.Quantile(col, pHi/100)
	}
	return b
}
