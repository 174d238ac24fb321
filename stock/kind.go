package stock

import (
	"strings"

	"drawerfit/fault"
)

// Kind is the kind of a part kept in stock.
type Kind uint8

const (
	// Resistor is a resistor, valued in ohms. It is the zero Kind.
	Resistor Kind = iota
	// Capacitor is a capacitor, valued in farads.
	Capacitor
	// OpAmp is an operational amplifier package (1, 2 or 4 amplifiers). Its
	// rows carry a free-text label instead of a value, and quantities count
	// packages.
	OpAmp
)

// Kinds lists every valid Kind in a stable order.
var Kinds = []Kind{Resistor, Capacitor, OpAmp}

// String returns "resistor", "capacitor" or "opamp" (or "kind(N)" for an
// invalid Kind).
func (k Kind) String() string {
	switch k {
	case Resistor:
		return "resistor"
	case Capacitor:
		return "capacitor"
	case OpAmp:
		return "opamp"
	}
	return "kind(" + itoa(int(k)) + ")"
}

// Valid reports whether k is Resistor, Capacitor or OpAmp.
func (k Kind) Valid() bool { return k == Resistor || k == Capacitor || k == OpAmp }

// Passive reports whether k is Resistor or Capacitor: a kind valued by a
// number (ohms or farads) that the fit places as a filter element.
func (k Kind) Passive() bool { return k == Resistor || k == Capacitor }

// Unit returns the symbol of the quantity that values of kind k are in:
// "Ω" for resistors, "F" for capacitors and "" for amplifiers (valued by
// a label).
func (k Kind) Unit() string {
	switch k {
	case Capacitor:
		return "F"
	case OpAmp:
		return ""
	}
	return "Ω"
}

// ParseKind reads a kind: "resistor" or "capacitor", or the schematic
// letters "R" and "C", or "opamp" (also "op-amp" and "amp"), in any letter
// case and ignoring surrounding spaces.
// Anything else is a fault.Invalid error that quotes the text.
func ParseKind(s string) (Kind, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "resistor", "r":
		return Resistor, nil
	case "capacitor", "c":
		return Capacitor, nil
	case "opamp", "op-amp", "amp":
		return OpAmp, nil
	}
	return 0, fault.Invalidf("kind %q is not resistor, capacitor, R, C or opamp", s)
}
