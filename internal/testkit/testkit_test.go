package testkit

import (
	"math"
	"testing"
)

func TestTolEqual(t *testing.T) {
	t.Parallel()
	inf, nan := math.Inf(1), math.NaN()
	for _, c := range []struct {
		name      string
		got, want float64
		tol       Tol
		ok        bool
	}{
		{"exact zero tolerance", 1.5, 1.5, Tol{}, true},
		{"zero tolerance refuses any difference", 1.5, math.Nextafter(1.5, 2), Tol{}, false},
		{"absolute inside", 1.0, 1.0009, Abs(1e-3), true},
		{"absolute outside", 1.0, 1.0011, Abs(1e-3), false},
		{"relative scales with the larger value", 1e6, 1e6 + 900, Rel(1e-3), true},
		{"relative outside", 1e6, 1e6 + 1100, Rel(1e-3), false},
		{"relative near zero fails", 0, 1e-12, Rel(1e-3), false},
		{"absolute rescues near zero", 0, 1e-12, AbsOrRel(1e-9, 1e-3), true},
		{"either bound suffices", 1e6, 1e6 + 900, AbsOrRel(1e-9, 1e-3), true},
		{"NaN agrees only with NaN", nan, nan, Tol{}, true},
		{"NaN against a number", nan, 1, Abs(1e9), false},
		{"equal infinities", inf, inf, Tol{}, true},
		{"infinity against a large number", inf, 1e308, Rel(1), false},
		{"opposite infinities", inf, -inf, Abs(1e9), false},
	} {
		t.Run(c.name, func(t *testing.T) {
			if got := c.tol.Equal(c.got, c.want); got != c.ok {
				t.Errorf("%v.Equal(%g, %g) = %v, want %v", c.tol, c.got, c.want, got, c.ok)
			}
		})
	}
}

// recorder is a testing.TB that keeps the failure instead of failing.
type recorder struct {
	testing.TB
	failed bool
	msg    string
}

func (r *recorder) Helper() {}
func (r *recorder) Errorf(format string, args ...any) {
	r.failed = true
	r.msg = format
}

func TestCloseReports(t *testing.T) {
	t.Parallel()
	r := &recorder{TB: t}
	if !Close(r, "R1", 1000, 1000.5, Rel(1e-3)) || r.failed {
		t.Fatal("a value within tolerance was reported")
	}
	if Close(r, "R1", 1000, 1010, Rel(1e-3)) || !r.failed {
		t.Fatal("a value outside tolerance was not reported")
	}
}

func TestTolString(t *testing.T) {
	t.Parallel()
	for tol, want := range map[Tol]string{
		{}:                 "exact",
		Abs(0.01):          "±0.01",
		Rel(1e-6):          "±1e-06 relative",
		AbsOrRel(1e-9, .1): "±1e-09 or ±0.1 relative",
	} {
		if got := tol.String(); got != want {
			t.Errorf("%#v.String() = %q, want %q", tol, got, want)
		}
	}
}
