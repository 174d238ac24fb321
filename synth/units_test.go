package synth

import (
	"math"
	"strings"
	"testing"
)

func TestFormatFrequency(t *testing.T) {
	t.Parallel()
	// Below 1 Hz in decimals of Hz: "500 mHz" reads as MHz on a bench
	// (issue 14); the rest with SI prefixes, rounded before the prefix.
	for _, tc := range []struct {
		f    float64
		sig  int
		want string
	}{
		{0.5, 4, "0.5 Hz"},
		{0.0125, 3, "0.0125 Hz"},
		{0.99996, 4, "1 Hz"},
		{1, 4, "1 Hz"},
		{440, 4, "440 Hz"},
		{999.99, 4, "1 kHz"},
		{1092.9, 5, "1.0929 kHz"},
		{15500, 4, "15.5 kHz"},
		{2.5e6, 4, "2.5 MHz"},
		{3e9, 4, "3 GHz"},
		{0, 4, "0 Hz"},
	} {
		if got := FormatFrequency(tc.f, tc.sig); got != tc.want {
			t.Errorf("FormatFrequency(%g, %d) = %q, want %q", tc.f, tc.sig, got, tc.want)
		}
	}
}

func TestBeyondMaxOrderAdvice(t *testing.T) {
	t.Parallel()
	// Butterworth 1 kHz / 1.5 kHz / 80 dB needs order 23 by the closed form
	// (log10(1e8 - 1) - log10(10^0.301 - 1)) / (2 log10 1.5) = 22.7 (DOMAIN.md's
	// order formula); the advice's figures are checked against the analysed
	// designs they claim.
	s := Spec{Kind: LowPass, Approx: Butterworth, Pass: 1000, Stop: 1500, StopAtten: 80}
	_, err := MinOrder(s)
	if err == nil {
		t.Fatal("order 23 was accepted")
	}
	msg := err.Error()
	for _, want := range []string{"needs order 23", "A Chebyshev response with 3.01 dB ripple would do it with order 11",
		"order 12 reaches 42.3 dB at 1.5 kHz", "80 dB from 2.16 kHz"} {
		if !strings.Contains(msg, want) {
			t.Errorf("message %q lacks %q", msg, want)
		}
	}
	c := Spec{Kind: LowPass, Approx: Chebyshev, Ripple: 3.0103, Pass: 1000, Stop: 1500, StopAtten: 80}
	if n, err := MinOrder(c); err != nil || n != 11 {
		t.Errorf("Chebyshev: order %d, %v; the advice says 11", n, err)
	}
	d, err := NewDesign(Spec{Kind: LowPass, Approx: Butterworth, Pass: 1000, Stop: 1500, StopAtten: 80, Order: 12}, 12, OddOnePole)
	if err != nil {
		t.Fatal(err)
	}
	if a := d.AttenuationAt(1500); math.Abs(a-42.3) > 0.05 {
		t.Errorf("order 12 gives %.3f dB at 1.5 kHz; the advice says 42.3", a)
	}
	moved := s
	moved.Stop = 2160
	if n, err := MinOrder(moved); err != nil || n > MaxOrder {
		t.Errorf("with fs 2.16 kHz: order %d, %v", n, err)
	}
	moved.Stop = 2150
	if _, err := MinOrder(moved); err == nil {
		t.Error("fs 2.15 kHz is enough, so the advice's edge is not the nearest three-digit one")
	}
}
