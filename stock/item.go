package stock

import (
	"math"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"drawerfit/fault"
)

// MaxText is the longest package, dielectric, location or note accepted, in
// characters (a guard against pasted garbage; common practice, no source).
const MaxText = 200

// MaxQuantity is the largest quantity a row may hold: a billion parts, far
// above any drawer, and small enough that sums of quantities cannot
// overflow (common practice, no source).
const MaxQuantity = 1_000_000_000

// Item is one stock row: a number of identical parts in one place.
type Item struct {
	// ID is the row's number in the store; 0 for a row not yet stored.
	ID int64
	// Kind says whether this is a resistor, a capacitor or an amplifier.
	Kind Kind
	// Value is in ohms for resistors and farads for capacitors; > 0. It is
	// 0 for amplifiers, which Name identifies.
	Value float64
	// Tolerance is a fraction (0.01 is ±1 %); 0 means not stated.
	Tolerance float64
	// Quantity is the number of parts on hand; >= 0.
	Quantity int
	// Package is free text such as "0805", "1206" or "axial".
	Package string
	// Dielectric is the capacitor dielectric, as NormalizeDielectric writes
	// it; always empty for resistors.
	Dielectric string
	// Location is the bin, drawer or reel label.
	Location string
	// Note is free text.
	Note string

	// The shop's attributes: not part of the row's identity.

	// Voltage is the rated voltage in volts (for capacitors; a resistor's
	// working voltage may be kept too); 0 means not rated.
	Voltage float64
	// Price is the unit price in the shop's one currency (no conversion is
	// done); the zero Money means not known.
	Price Money
	// Min is the minimum stock: below it the row should be reordered; 0
	// means no minimum.
	Min int
	// Pack is the pack size the row is bought in (a reel, a bag of 100);
	// 0 means single parts.
	Pack int
	// SupplierRef is free text the shop reorders by (its own code or the
	// supplier's order code).
	SupplierRef string

	// Amplifier figures; all zero or empty for resistors and capacitors.
	// See amp.go for their rules.

	// Name is an amplifier's label, the user's own free text (the CSV
	// value column); required for amplifiers.
	Name string
	// Channels is the number of amplifiers in one package: 1, 2 or 4.
	Channels int
	// GBW is the gain-bandwidth product in Hz; 0 means not stated.
	GBW float64
	// DCGain is the open-loop DC gain in dB; 0 means not stated, and
	// DefaultDCGainDB is assumed.
	DCGain float64
	// Slew is the slew rate in V/µs; 0 means not stated.
	Slew float64
	// Supply is the supply range as free text ("±15 V", "3–5.5 V").
	Supply string
}

// Identity is what makes two stock rows the same row: kind, value,
// tolerance, package, dielectric and location, and an amplifier's label.
// Text fields compare without regard to ASCII letter case ("a1" is bin
// "A1"), as the store's unique index does. Quantity, note and an
// amplifier's figures are not part of it.
type Identity struct {
	Kind       Kind
	Value      float64
	Tolerance  float64
	Package    string // ASCII lower case
	Dielectric string // ASCII lower case
	Location   string // ASCII lower case
	Name       string // ASCII lower case
}

// asciiLower folds A-Z only, matching SQLite's NOCASE collation.
func asciiLower(s string) string {
	return strings.Map(func(r rune) rune {
		if r >= 'A' && r <= 'Z' {
			return r + ('a' - 'A')
		}
		return r
	}, s)
}

// Identity returns the item's identity.
func (it Item) Identity() Identity {
	return Identity{
		Kind: it.Kind, Value: it.Value, Tolerance: it.Tolerance,
		Package: asciiLower(it.Package), Dielectric: asciiLower(it.Dielectric), Location: asciiLower(it.Location),
		Name: asciiLower(it.Name),
	}
}

// Label is a short human description of the row without its quantity and
// note: "4.7 kΩ 1% 0805 @A1", "2.2 nF 5% C0G 0805 @B3" or, for an
// amplifier, "QA-10 dual 10 MHz SO-8 @D1".
func (it Item) Label() string {
	if it.Kind == OpAmp {
		return it.ampLabel()
	}
	parts := []string{FormatValue(it.Value, it.Kind)}
	for _, s := range []string{FormatTolerance(it.Tolerance), it.Dielectric, it.Package} {
		if s != "" {
			parts = append(parts, s)
		}
	}
	if it.Location != "" {
		parts = append(parts, "@"+it.Location)
	}
	return strings.Join(parts, " ")
}

// Normalize trims the text fields, collapses inner runs of white space in
// package, dielectric and location, and canonicalises the dielectric
// (NormalizeDielectric). The note is only trimmed.
func (it Item) Normalize() Item {
	squash := func(s string) string { return strings.Join(strings.Fields(s), " ") }
	it.Package = squash(it.Package)
	it.Dielectric = NormalizeDielectric(it.Dielectric)
	it.Location = squash(it.Location)
	it.Note = strings.TrimSpace(it.Note)
	it.SupplierRef = squash(it.SupplierRef)
	it.Name = squash(it.Name)
	it.Supply = squash(it.Supply)
	return it
}

// FieldError is a problem with one field of an item.
type FieldError struct {
	Field  string // column name: kind, value, tolerance, quantity, package, dielectric, location, note, voltage, price, min, pack, supplier-ref, channels, gbw, dc-gain, slew, supply
	Reason string
}

// Problems lists everything wrong with it (after Normalize, which callers
// should apply first), or nil. Rules: a valid kind; a finite value within
// the kind's bounds; a tolerance of 0 (not stated) or in (0, MaxTolerance];
// a quantity, minimum and pack size in [0, MaxQuantity]; a voltage of 0
// (not rated) or in [MinVoltage, MaxVoltage]; a price of at most MaxPrice;
// no dielectric on a resistor; text fields valid UTF-8, free of control
// characters (the note may hold line breaks and tabs) and at most MaxText
// characters. Amplifiers follow ampProblems: a label instead of a value,
// and their own figures.
func (it Item) Problems() []FieldError {
	var out []FieldError
	add := func(f, r string) { out = append(out, FieldError{f, r}) }
	if !it.Kind.Valid() {
		add("kind", "unknown kind "+it.Kind.String())
	} else if it.Kind == OpAmp {
		out = append(out, it.ampProblems()...)
	} else {
		lo, hi := MinResistance, MaxResistance
		if it.Kind == Capacitor {
			lo, hi = MinCapacitance, MaxCapacitance
		}
		if math.IsNaN(it.Value) || math.IsInf(it.Value, 0) || it.Value < lo || it.Value > hi {
			add("value", "value "+strconv.FormatFloat(it.Value, 'g', -1, 64)+" is outside "+
				FormatValue(lo, it.Kind)+" to "+FormatValue(hi, it.Kind))
		}
	}
	if math.IsNaN(it.Tolerance) || it.Tolerance < 0 || it.Tolerance > MaxTolerance {
		add("tolerance", "tolerance "+strconv.FormatFloat(it.Tolerance, 'g', -1, 64)+" is outside 0 to "+FormatTolerance(MaxTolerance))
	}
	if it.Quantity < 0 {
		add("quantity", "quantity "+strconv.Itoa(it.Quantity)+" is negative")
	} else if it.Quantity > MaxQuantity {
		add("quantity", "quantity "+strconv.Itoa(it.Quantity)+" is above "+strconv.Itoa(MaxQuantity))
	}
	if it.Voltage != 0 && (math.IsNaN(it.Voltage) || it.Voltage < MinVoltage || it.Voltage > MaxVoltage) {
		add("voltage", "voltage "+strconv.FormatFloat(it.Voltage, 'g', -1, 64)+" V is outside "+
			FormatVoltage(MinVoltage)+" to "+FormatVoltage(MaxVoltage))
	}
	if it.Price.Micros() > MaxPrice*moneyScale {
		add("price", "price "+it.Price.String()+" is above "+strconv.Itoa(MaxPrice))
	}
	for _, f := range []struct {
		name string
		n    int
	}{{"min", it.Min}, {"pack", it.Pack}} {
		if f.n < 0 {
			add(f.name, f.name+" "+strconv.Itoa(f.n)+" is negative")
		} else if f.n > MaxQuantity {
			add(f.name, f.name+" "+strconv.Itoa(f.n)+" is above "+strconv.Itoa(MaxQuantity))
		}
	}
	if it.Kind == Resistor && it.Dielectric != "" {
		add("dielectric", "a resistor has no dielectric (put the resistor type in the note)")
	}
	if it.Kind.Passive() {
		out = append(out, it.passiveAmpFields()...)
	}
	for _, f := range []struct{ name, v string }{
		{"package", it.Package}, {"dielectric", it.Dielectric}, {"location", it.Location}, {"note", it.Note},
		{"supplier-ref", it.SupplierRef}, {"value", it.Name}, {"supply", it.Supply},
	} {
		if r := textProblem(f.v, f.name == "note"); r != "" {
			add(f.name, r)
		}
	}
	return out
}

// TextProblem says what makes s unfit as text a user supplies (a name, a
// label, a location): invalid UTF-8, more than MaxText characters, or a
// control character (newline, tab and carriage return allowed only when
// multiline). It returns "" for good text.
func TextProblem(s string, multiline bool) string { return textProblem(s, multiline) }

func textProblem(s string, multiline bool) string {
	if !utf8.ValidString(s) {
		return "not valid UTF-8"
	}
	if n := utf8.RuneCountInString(s); n > MaxText {
		return "longer than " + strconv.Itoa(MaxText) + " characters"
	}
	for _, r := range s {
		if multiline && (r == '\n' || r == '\t' || r == '\r') {
			continue
		}
		if unicode.IsControl(r) {
			return "contains a control character " + strconv.QuoteRune(r)
		}
	}
	return ""
}

// Validate returns a fault.Invalid error naming the first problem of it,
// or nil. It does not normalise.
func (it Item) Validate() error {
	if p := it.Problems(); len(p) > 0 {
		return fault.Invalidf("%s: %s", p[0].Field, p[0].Reason)
	}
	return nil
}
