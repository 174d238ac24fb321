package stock

import (
	"strings"

	"drawerfit/fault"
)

// Kind is the kind of a passive part kept in stock.
type Kind uint8

const (
	// Resistor is a resistor, valued in ohms. It is the zero Kind.
	Resistor Kind = iota
	// Capacitor is a capacitor, valued in farads.
	Capacitor
)

// Kinds lists every valid Kind in a stable order.
var Kinds = []Kind{Resistor, Capacitor}

// String returns "resistor" or "capacitor" (or "kind(N)" for an invalid
// Kind).
func (k Kind) String() string {
	switch k {
	case Resistor:
		return "resistor"
	case Capacitor:
		return "capacitor"
	}
	return "kind(" + itoa(int(k)) + ")"
}

// Valid reports whether k is Resistor or Capacitor.
func (k Kind) Valid() bool { return k == Resistor || k == Capacitor }

// Unit returns the symbol of the quantity that values of kind k are in:
// "Ω" for resistors and "F" for capacitors.
func (k Kind) Unit() string {
	if k == Capacitor {
		return "F"
	}
	return "Ω"
}

// ParseKind reads a kind: "resistor" or "capacitor", or the schematic
// letters "R" and "C", in any letter case and ignoring surrounding spaces.
// Anything else is a fault.Invalid error that quotes the text.
func ParseKind(s string) (Kind, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "resistor", "r":
		return Resistor, nil
	case "capacitor", "c":
		return Capacitor, nil
	}
	return 0, fault.Invalidf("kind %q is not resistor, capacitor, R or C", s)
}
