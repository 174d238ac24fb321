package respplot

import (
	"math"
	"math/cmplx"
)

// butterworth returns the n-th order Butterworth response with its -3 dB
// edge at f0 Hz, from the pole formula in docs/check-values.md, "Approximations":
// s_k = -sin θk + j cos θk, θk = (2k-1)π/(2n), scaled to unity passband
// gain. highpass applies s -> 1/s.
func butterworth(n int, f0 float64, highpass bool) func(w float64) complex128 {
	w0 := 2 * math.Pi * f0
	poles := make([]complex128, n)
	for k := 1; k <= n; k++ {
		th := float64(2*k-1) * math.Pi / float64(2*n)
		poles[k-1] = complex(-math.Sin(th), math.Cos(th))
	}
	return func(w float64) complex128 {
		s := complex(0, w/w0)
		if highpass {
			s = 1 / s
		}
		h := complex(1, 0)
		for _, p := range poles {
			h *= -p / (s - p)
		}
		return h
	}
}

// rcLowPass is the first-order RC low-pass H = 1/(1 + jωτ).
func rcLowPass(tau float64) func(w float64) complex128 {
	return func(w float64) complex128 { return 1 / complex(1, w*tau) }
}

var _ = cmplx.Abs
