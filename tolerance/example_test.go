package tolerance_test

import (
	"fmt"

	"drawerfit/tolerance"
)

// The gain-bandwidth rule of Op Amps for Everyone, section 16.8.4, for the
// Q = 1.618 section of a 10 kHz 5th-order Butterworth low-pass (the book's
// example asks for about 1.5 MHz).
func ExampleGBWRule() {
	gbw, rule := tolerance.GBWRule(2, 10e3, 1.618034, 0)
	fmt.Printf("%.4g MHz: %s\n", gbw/1e6, rule)
	// Output: 1.53 MHz: fT >= 100·Q·f0·√((Q²-0.5)/(Q²-0.25)) for Q > 1
}

// The Wilson 95 % interval of 23 passing boards out of 25.
func ExampleWilson() {
	lo, hi := tolerance.Wilson(23, 25, 1.959964)
	fmt.Printf("%.3f to %.3f\n", lo, hi)
	// Output: 0.750 to 0.978
}
