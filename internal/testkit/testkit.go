// Package testkit holds the few helpers the project's tests share: one
// numeric comparison with an absolute-or-relative tolerance, and the switch
// for the long sweeps that only CI runs.
//
// It is imported by _test.go files only.
package testkit

import (
	"fmt"
	"math"
	"os"
	"testing"
)

// Tol is an absolute-or-relative tolerance: got and want agree when they
// differ by at most Abs, or by at most Rel times the larger of their
// magnitudes. A zero field is not used; the zero Tol asks for exact
// equality.
type Tol struct {
	Abs float64
	Rel float64
}

// Abs is an absolute tolerance in the unit of the compared values.
func Abs(a float64) Tol { return Tol{Abs: a} }

// Rel is a relative tolerance (1e-3 is 0.1 %).
func Rel(r float64) Tol { return Tol{Rel: r} }

// AbsOrRel accepts a difference within either bound.
func AbsOrRel(a, r float64) Tol { return Tol{Abs: a, Rel: r} }

// String prints the tolerance as the failure messages quote it.
func (t Tol) String() string {
	switch {
	case t.Abs > 0 && t.Rel > 0:
		return fmt.Sprintf("±%g or ±%g relative", t.Abs, t.Rel)
	case t.Abs > 0:
		return fmt.Sprintf("±%g", t.Abs)
	case t.Rel > 0:
		return fmt.Sprintf("±%g relative", t.Rel)
	}
	return "exact"
}

// Equal reports whether got and want agree within t. Two NaNs agree, as do
// two infinities of the same sign; a NaN or an infinity never agrees with a
// finite number.
func (t Tol) Equal(got, want float64) bool {
	if math.IsNaN(got) || math.IsNaN(want) {
		return math.IsNaN(got) && math.IsNaN(want)
	}
	if got == want {
		return true
	}
	if math.IsInf(got, 0) || math.IsInf(want, 0) {
		return false
	}
	d := math.Abs(got - want)
	if t.Abs > 0 && d <= t.Abs {
		return true
	}
	return t.Rel > 0 && d <= t.Rel*math.Max(math.Abs(got), math.Abs(want))
}

// Close reports a test error naming what was compared when got and want do
// not agree within tol, and says whether they agreed.
func Close(tb testing.TB, what string, got, want float64, tol Tol) bool {
	tb.Helper()
	if tol.Equal(got, want) {
		return true
	}
	tb.Errorf("%s = %.10g, want %.10g (%s)", what, got, want, tol)
	return false
}

// LongEnv is the environment variable that turns on the long sweeps; .ci/run
// sets it.
const LongEnv = "DRAWERFIT_LONG"

// Long reports whether the long sweeps were asked for (DRAWERFIT_LONG=1).
// They repeat checks the default suite already makes, on more or larger
// cases.
func Long() bool { return os.Getenv(LongEnv) == "1" }
