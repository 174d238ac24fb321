package stock

import (
	"math"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"drawerfit/fault"
)

// Value bounds. They are not physical limits but a guard against typing
// mistakes (a value far outside anything sold is almost certainly a wrong
// prefix); the figures are common practice, no source.
const (
	// MinResistance and MaxResistance bound resistor values, in ohms:
	// 1 µΩ (below any shunt) to 1 TΩ (above any high-value resistor).
	MinResistance = 1e-6
	MaxResistance = 1e12
	// MinCapacitance and MaxCapacitance bound capacitor values, in farads:
	// 0.01 pF (below any discrete trimmer step) to 1000 F (above the usual
	// supercapacitors).
	MinCapacitance = 1e-14
	MaxCapacitance = 1e3
)

// maxValueText is the longest value text ParseValue reads; no honest value
// needs more than a few characters, so a longer text is refused rather than
// scanned.
const maxValueText = 40

// ParseValue reads a resistor value in ohms or a capacitor value in farads.
// It accepts:
//
//   - plain numbers in base units: 4700, 0.47, 4.7e3 ohms; 2.2e-9 farads
//     (capacitors need the exponent form, see below);
//   - a number, optional spaces, an SI prefix and/or a unit: 4.7k, 4.7 kΩ,
//     4.7kohm, 470R, 1M; 47nF, 0.047uF, 0.047µF, 47000p, 1F;
//   - the IEC 60062 letter-and-digit code, where the letter stands for the
//     decimal point and the multiplier: 4K7, 4k7, 47K3, R47, 4R7, 1M0 for
//     resistors; 2n2, 4u7, 1µ0, p68, 10p for capacitors. A unit may follow
//     the code (4K7Ω, 2n2F).
//
// Resistor prefixes are m (milli), k or K, M (mega) and G; the unit is Ω
// (or the ohm sign), ohm, ohms or R. Capacitor prefixes are p, n, u/µ and m
// (milli), with p, n and u also accepted in capital letters; the unit is F.
// For capacitors a capital M is refused because old markings used it for
// micro, and a lowercase f without a prefix is refused because it could
// mean femto.
//
// A capacitor value must carry a prefix, the unit F, or an exponent
// (4.7e-9 is farads). A bare decimal such as 103 or 0.1 is refused: the
// three-digit marking reads 103 as 10 nF and older schematics read 0.1 as
// 0.1 µF, so no single reading is safe. For a three-digit text the error
// says what the marking would mean. Resistors have no such rule: a bare
// number is ohms.
//
// The result is the float64 nearest to the decimal value written, so
// "4k7", "4.7k" and "4700" give the identical number. Empty, negative,
// zero, NaN or infinite values, values outside [MinResistance,
// MaxResistance] or [MinCapacitance, MaxCapacitance], repeated multipliers
// (4k7k), a prefix or unit that does not exist or does not fit the kind,
// and any other malformed text are fault.Invalid errors whose message
// quotes the text and says what is wrong.
func ParseValue(s string, k Kind) (float64, error) {
	if !k.Valid() {
		return 0, fault.Invalidf("value %q: unknown part kind %v", s, k)
	}
	if !k.Passive() {
		return 0, fault.Invalidf("value %q: an amplifier is named by a label, not a number value", s)
	}
	v, err := parseValue(s, k)
	if err != nil {
		return 0, fault.Invalidf("%s value %q: %s", k, s, err.msg)
	}
	return v, nil
}

// valueError is a reason without the quoted text; ParseValue adds that.
type valueError struct{ msg string }

func bad(msg string) *valueError { return &valueError{msg} }

// multiplier is a letter that scales a value: a prefix after a number, or
// the decimal marker of an IEC 60062 code.
type multiplier struct {
	exp    int  // power of ten
	prefix bool // a real SI prefix (R, the resistor code's unit marker, is not)
}

// multiplierOf returns the meaning of r for kind k, or a reason why it has
// none.
func multiplierOf(r rune, k Kind) (multiplier, *valueError) {
	if k == Resistor {
		switch r {
		case 'R', 'r':
			return multiplier{0, false}, nil
		case 'm':
			return multiplier{-3, true}, nil
		case 'k', 'K':
			return multiplier{3, true}, nil
		case 'M':
			return multiplier{6, true}, nil
		case 'G', 'g':
			return multiplier{9, true}, nil
		case 'p', 'P', 'n', 'N', 'u', 'U', 'µ', 'μ':
			return multiplier{}, bad("prefix " + strconv.QuoteRune(r) + " is for capacitors, not resistors")
		}
		return multiplier{}, bad("unknown prefix " + strconv.QuoteRune(r))
	}
	switch r {
	case 'p', 'P':
		return multiplier{-12, true}, nil
	case 'n', 'N':
		return multiplier{-9, true}, nil
	case 'u', 'U', 'µ', 'μ':
		return multiplier{-6, true}, nil
	case 'm':
		return multiplier{-3, true}, nil
	case 'M':
		return multiplier{}, bad("\"M\" is ambiguous for a capacitor (milli, or micro in old markings); write m or u")
	case 'k', 'K', 'G', 'g', 'R', 'r':
		return multiplier{}, bad("prefix " + strconv.QuoteRune(r) + " is for resistors, not capacitors")
	}
	return multiplier{}, bad("unknown prefix " + strconv.QuoteRune(r))
}

// unitOK reports whether u is a unit symbol for kind k, or why not. For
// capacitors a lowercase f is a unit only after a prefix (47nf), since alone
// it could mean femto.
func unitOK(u string, k Kind, afterPrefix bool) *valueError {
	low := strings.ToLower(u)
	if k == Resistor {
		switch {
		case u == "Ω" || u == "\u2126": // Greek capital omega, ohm sign
			return nil
		case low == "ohm" || low == "ohms" || low == "r":
			return nil
		case u == "ω":
			return bad("unit \"ω\" (lowercase omega) is not the ohm; write Ω or ohm")
		case low == "f":
			return bad("unit " + strconv.Quote(u) + " is for capacitors, not resistors")
		}
		return bad("unknown unit " + strconv.Quote(u))
	}
	switch {
	case u == "F":
		return nil
	case u == "f" && afterPrefix:
		return nil
	case u == "f":
		return bad("\"f\" alone could mean femto; write F for farads, or use p, n or u")
	case u == "Ω" || u == "\u2126" || low == "ohm" || low == "ohms" || low == "r":
		return bad("unit " + strconv.Quote(u) + " is for resistors, not capacitors")
	}
	return bad("unknown unit " + strconv.Quote(u))
}

func isDigit(r rune) bool { return r >= '0' && r <= '9' }

// scanner walks the runes of a value text.
type scanner struct {
	rs []rune
	i  int
}

func (p *scanner) peek() rune {
	if p.i < len(p.rs) {
		return p.rs[p.i]
	}
	return 0
}

func (p *scanner) peekAt(n int) rune {
	if p.i+n < len(p.rs) {
		return p.rs[p.i+n]
	}
	return 0
}

func (p *scanner) digits() string {
	start := p.i
	for p.i < len(p.rs) && isDigit(p.rs[p.i]) {
		p.i++
	}
	return string(p.rs[start:p.i])
}

func (p *scanner) spaces() bool {
	start := p.i
	for p.i < len(p.rs) && unicode.IsSpace(p.rs[p.i]) {
		p.i++
	}
	return p.i > start
}

func (p *scanner) rest() string { return string(p.rs[p.i:]) }

func parseValue(s string, k Kind) (float64, *valueError) {
	t := strings.TrimSpace(s)
	switch {
	case t == "":
		return 0, bad("empty")
	case !utf8.ValidString(t):
		return 0, bad("not valid UTF-8")
	case utf8.RuneCountInString(t) > maxValueText:
		return 0, bad("too long (at most " + strconv.Itoa(maxValueText) + " characters)")
	}
	if low := strings.ToLower(t); low == "nan" || strings.HasPrefix(low, "inf") {
		return 0, bad("not a number")
	}
	p := &scanner{rs: []rune(t)}
	switch p.peek() {
	case '-', '−':
		return 0, bad("negative; a value must be greater than zero")
	case '+':
		return 0, bad("a sign is not allowed")
	}

	var (
		intPart, fracPart string
		exp               int  // power of ten from exponent, prefix or code letter
		hasExp            bool // scientific exponent written
		hasPrefix         bool // SI prefix or code multiplier written
		hasUnit           bool
		isCode            bool
	)

	if r := p.peek(); !isDigit(r) && r != '.' {
		// Leading-marker code: R47, p68, k47.
		if !unicode.IsLetter(r) {
			return 0, bad("does not start with a number or a code letter")
		}
		m, err := multiplierOf(r, k)
		if err != nil {
			return 0, err
		}
		p.i++
		fracPart = p.digits()
		if fracPart == "" {
			return 0, bad("a code letter must be followed by digits (like R47 or p68)")
		}
		intPart, exp, hasPrefix, isCode = "0", m.exp, m.prefix, true
	} else {
		intPart = p.digits()
		dot := false
		if p.peek() == '.' {
			dot = true
			p.i++
			fracPart = p.digits()
		}
		if intPart == "" && fracPart == "" {
			return 0, bad("no digits")
		}
		if p.peek() == '.' || p.peek() == ',' {
			return 0, bad("malformed number (more than one decimal point, or a comma)")
		}
		// Scientific exponent: e or E followed by an optional sign and digits.
		if r := p.peek(); r == 'e' || r == 'E' {
			j := 1
			if s := p.peekAt(1); s == '+' || s == '-' {
				j = 2
			}
			if isDigit(p.peekAt(j)) {
				p.i += j
				sign := 1
				if p.rs[p.i-1] == '-' {
					sign = -1
				}
				ed := p.digits()
				if len(ed) > 3 {
					return 0, bad("exponent out of range")
				}
				n, _ := strconv.Atoi(ed)
				exp, hasExp = sign*n, true
			} else {
				return 0, bad("malformed exponent")
			}
		}
		spaced := p.spaces()
		// Infix code such as 4K7 or 47K3: a letter directly between digits.
		if r := p.peek(); !dot && !hasExp && !spaced && unicode.IsLetter(r) && isDigit(p.peekAt(1)) {
			m, err := multiplierOf(r, k)
			if err != nil {
				return 0, err
			}
			p.i++
			fracPart = p.digits()
			exp, hasPrefix, isCode = m.exp, m.prefix, true
			if p.peek() == '.' || p.peek() == ',' {
				return 0, bad("a code has no decimal point besides its letter")
			}
		}
	}

	// What is left: nothing, a prefix, a unit, or a prefix and a unit.
	p.spaces()
	rest := p.rest()
	if rest != "" {
		if isCode {
			// After a code only a unit may follow; another multiplier
			// (4k7k) would be read two ways.
			if err := unitOK(rest, k, hasPrefix); err != nil {
				if r, _ := utf8.DecodeRuneInString(rest); unicode.IsLetter(r) {
					if _, merr := multiplierOf(r, k); merr == nil {
						return 0, bad("ambiguous: a second multiplier " + strconv.Quote(rest) + " after a letter code")
					}
				}
				return 0, err
			}
			hasUnit = true
		} else if err := unitOK(rest, k, false); err == nil {
			hasUnit = true
		} else if !strings.HasPrefix(err.msg, "unknown unit") {
			// A unit of the other kind, lowercase omega, a lone f.
			return 0, err
		} else {
			r, size := utf8.DecodeRuneInString(rest)
			if isDigit(r) || r == '.' {
				return 0, bad("malformed: unexpected " + strconv.Quote(rest))
			}
			m, merr := multiplierOf(r, k)
			if merr != nil || !m.prefix {
				if merr == nil {
					// R alone is the resistor unit (handled above); R plus
					// more is malformed.
					return 0, bad("malformed: unexpected " + strconv.Quote(rest))
				}
				return 0, merr
			}
			if hasExp {
				return 0, bad("an exponent and a prefix together are ambiguous; write one of them")
			}
			exp, hasPrefix = m.exp, true
			if u := rest[size:]; u != "" {
				if err := unitOK(u, k, true); err != nil {
					r2, _ := utf8.DecodeRuneInString(u)
					if isDigit(r2) || r2 == '.' {
						return 0, bad("malformed: digits after the prefix (a letter code is written without spaces, like 4k7)")
					}
					if unicode.IsLetter(r2) {
						if _, m2 := multiplierOf(r2, k); m2 == nil {
							return 0, bad("ambiguous: more than one prefix in " + strconv.Quote(rest))
						}
					}
					return 0, err
				}
				hasUnit = true
			}
		}
	}

	if k == Capacitor && !hasPrefix && !hasUnit && !hasExp && !isCode {
		// A bare decimal is read three ways in the trade: farads, a
		// three-digit marking (103 = 10 nF), or microfarads on older
		// schematics (0.1 = 0.1 µF). Refuse it rather than pick one.
		msg := "a bare number is ambiguous for a capacitor; write a prefix or unit (4.7n, 0.1uF, 1F) or farads in exponent form (4.7e-9)"
		if len(t) == 3 && fracPart == "" && t[0] != '0' {
			pf := float64(int(t[0]-'0')*10+int(t[1]-'0')) * math.Pow10(int(t[2]-'0'))
			msg = "a bare number is ambiguous for a capacitor; as the three-digit marking it would be " +
				FormatValue(pf*1e-12, Capacitor) + ", written " + compactValue(pf*1e-12, Capacitor)
		}
		return 0, bad(msg)
	}

	if intPart == "" {
		intPart = "0"
	}
	if fracPart == "" {
		fracPart = "0"
	}
	v, err := strconv.ParseFloat(intPart+"."+fracPart+"e"+strconv.Itoa(exp), 64)
	if err != nil || math.IsInf(v, 0) || math.IsNaN(v) {
		return 0, bad("out of range")
	}
	if v == 0 {
		return 0, bad("zero; a value must be greater than zero")
	}
	lo, hi := MinResistance, MaxResistance
	if k == Capacitor {
		lo, hi = MinCapacitance, MaxCapacitance
	}
	if v < lo || v > hi {
		return 0, bad("outside " + FormatValue(lo, k) + " to " + FormatValue(hi, k) + " (a wrong prefix?)")
	}
	return v, nil
}

// decimal is a finite positive number as its significant digits and the
// power of ten of the first one: digits "47", exp10 3 means 4.7e3.
type decimal struct {
	digits string
	exp10  int
}

// toDecimal gives v's digits rounded to sig significant digits, or the
// shortest digits that read back as exactly v when sig <= 0. Trailing zeros
// are trimmed.
func toDecimal(v float64, sig int) decimal {
	var s string
	if sig <= 0 {
		s = strconv.FormatFloat(v, 'e', -1, 64)
	} else {
		s = strconv.FormatFloat(v, 'e', sig-1, 64)
	}
	mant, e, _ := strings.Cut(s, "e")
	exp, _ := strconv.Atoi(e)
	digits := strings.Replace(mant, ".", "", 1)
	digits = strings.TrimRight(digits, "0")
	if digits == "" {
		digits = "0"
	}
	return decimal{digits: digits, exp10: exp}
}

// shifted writes d scaled by 10^-by in plain positional notation, with no
// trailing zeros after the point: decimal{"47",3}.shifted(3) is "4.7".
func (d decimal) shifted(by int) string {
	// Position of the decimal point after the first digit's place.
	point := d.exp10 - by + 1
	digits := d.digits
	switch {
	case point <= 0:
		return "0." + strings.Repeat("0", -point) + digits
	case point >= len(digits):
		return digits + strings.Repeat("0", point-len(digits))
	}
	return digits[:point] + "." + digits[point:]
}

// group picks the SI prefix for a value whose first digit is at 10^exp10:
// the prefix's power of ten and its symbol.
func group(exp10 int, k Kind) (int, string) {
	if k == Capacitor {
		switch {
		case exp10 < -9:
			return -12, "p"
		case exp10 < -6:
			return -9, "n"
		case exp10 < 0:
			return -6, "µ"
		}
		return 0, ""
	}
	switch {
	case exp10 < 3:
		return 0, ""
	case exp10 < 6:
		return 3, "k"
	case exp10 < 9:
		return 6, "M"
	}
	return 9, "G"
}

// FormatValue writes a value in engineering notation with its unit and no
// trailing zeros: 4.7 kΩ, 47.3 kΩ, 1 MΩ, 0.47 Ω, 2.2 nF, 470 pF, 0.68 pF,
// 4.7 µF, 4700 µF. Resistors use Ω, k, M and G (values below 1 Ω in ohms);
// capacitors use p, n and µ (values from 1 mF up stay in µF, from 1 F in F).
// At most six significant digits are shown; use FormatValuePrec for fewer.
// A value that is not finite and positive is written with %g.
func FormatValue(v float64, k Kind) string { return FormatValuePrec(v, k, 6) }

// FormatValuePrec is FormatValue rounded to at most sig significant digits
// (sig <= 0 means as many as needed to read back exactly v).
func FormatValuePrec(v float64, k Kind, sig int) string {
	if !(v > 0) || math.IsInf(v, 0) {
		return strconv.FormatFloat(v, 'g', -1, 64) + " " + k.Unit()
	}
	d := toDecimal(v, sig)
	g, sym := group(d.exp10, k)
	return d.shifted(g) + " " + sym + k.Unit()
}

// compactValue writes v exactly (it reads back with ParseValue as the same
// float64) in a short ASCII form for files: 4.7k, 470, 1M for resistors;
// 2.2nF, 470pF, 4.7uF for capacitors.
func compactValue(v float64, k Kind) string {
	d := toDecimal(v, 0)
	g, sym := group(d.exp10, k)
	if sym == "µ" {
		sym = "u"
	}
	if k == Capacitor {
		return d.shifted(g) + sym + "F"
	}
	return d.shifted(g) + sym
}

func itoa(n int) string { return strconv.Itoa(n) }

// parseDecimal returns the float64 nearest to d.
func parseDecimal(d decimal) (float64, error) {
	return strconv.ParseFloat(d.digits[:1]+"."+d.digits[1:]+"e"+strconv.Itoa(d.exp10), 64)
}
