package stock

import (
	"math/bits"
	"strconv"
	"strings"

	"drawerfit/fault"
)

// MoneyDecimals is how many decimal places a price may have. Six places
// hold the sub-cent unit prices of resistors bought by the reel (0.0012)
// with room to spare (common practice, no source).
const MoneyDecimals = 6

const moneyScale = 1_000_000 // 10^MoneyDecimals

// MaxPrice is the largest unit price accepted, in currency units: a guard
// against a misplaced decimal point, far above any part a filter uses
// (common practice, no source).
const MaxPrice = 1_000_000

// Money is an exact amount in the shop's one currency, held as an integer
// number of millionths of a currency unit; it is never a float. The zero
// Money is unknown (a row without a price), which is not the same as a
// known price of zero. drawerfit does no currency conversion: every price
// in one stock is taken to be in the same currency, which it does not name.
type Money struct {
	micros int64
	known  bool
}

// MoneyFromMicros returns a known amount of n millionths of a currency
// unit. It panics if n is negative (programmer misuse).
func MoneyFromMicros(n int64) Money {
	if n < 0 {
		panic("stock: MoneyFromMicros of a negative amount")
	}
	return Money{micros: n, known: true}
}

// Known reports whether the amount is known.
func (m Money) Known() bool { return m.known }

// Micros returns the amount in millionths of a currency unit (0 when
// unknown).
func (m Money) Micros() int64 { return m.micros }

// ParsePrice reads a unit price: digits with an optional decimal point and
// at most MoneyDecimals places ("0.012", "12", "1.50"), from 0 to MaxPrice.
// The text is read exactly, never through a float. An empty text is an
// unknown price. A comma ("1,2"), a sign, a currency symbol, an exponent,
// more places than MoneyDecimals or a value above MaxPrice are
// fault.Invalid errors that quote the text.
func ParsePrice(s string) (Money, error) {
	t := strings.TrimSpace(s)
	if t == "" {
		return Money{}, nil
	}
	m, reason := parseMoney(t)
	if reason != "" {
		return Money{}, fault.Invalidf("price %q %s", s, reason)
	}
	return m, nil
}

func parseMoney(t string) (Money, string) {
	intPart, frac, dot := strings.Cut(t, ".")
	switch {
	case strings.HasPrefix(t, "-") || strings.HasPrefix(t, "−"):
		return Money{}, "is negative"
	case strings.HasPrefix(t, "+"):
		return Money{}, "has a sign; write the number alone"
	case strings.Contains(t, ","):
		return Money{}, "has a comma; write the decimal point as \".\" and no thousands separator"
	case dot && strings.Contains(frac, "."):
		return Money{}, "has more than one decimal point"
	case intPart == "" && frac == "":
		return Money{}, "has no digits"
	}
	for _, r := range intPart + frac {
		if r < '0' || r > '9' {
			return Money{}, "is not a decimal number (digits and one decimal point only, no currency sign or exponent)"
		}
	}
	if len(frac) > MoneyDecimals {
		if strings.TrimRight(frac[MoneyDecimals:], "0") != "" {
			return Money{}, "has more than " + strconv.Itoa(MoneyDecimals) + " decimal places"
		}
		frac = frac[:MoneyDecimals]
	}
	intPart = strings.TrimLeft(intPart, "0")
	if len(intPart) > len(strconv.Itoa(MaxPrice)) {
		return Money{}, "is above " + strconv.Itoa(MaxPrice)
	}
	whole, _ := strconv.ParseInt("0"+intPart, 10, 64)
	frac += strings.Repeat("0", MoneyDecimals-len(frac))
	f, _ := strconv.ParseInt(frac, 10, 64)
	n := whole*moneyScale + f
	if n > MaxPrice*moneyScale {
		return Money{}, "is above " + strconv.Itoa(MaxPrice)
	}
	return Money{micros: n, known: true}, ""
}

// String writes a known amount exactly with at least two decimal places
// and no other trailing zeros ("0.012", "0.30", "12.00", "1234.5678"); an
// unknown amount is "".
func (m Money) String() string {
	if !m.known {
		return ""
	}
	whole, frac := m.micros/moneyScale, m.micros%moneyScale
	fs := strconv.FormatInt(frac+moneyScale, 10)[1:] // zero-padded to MoneyDecimals
	fs = strings.TrimRight(fs, "0")
	for len(fs) < 2 {
		fs += "0"
	}
	return strconv.FormatInt(whole, 10) + "." + fs
}

// Times returns m multiplied by n (n >= 0). The result is unknown when m
// is; ok is false when the product does not fit (more than about 9.2
// trillion currency units), and then the result is unknown.
func (m Money) Times(n int) (Money, bool) {
	if !m.known {
		return Money{}, true
	}
	if n < 0 {
		panic("stock: Money.Times with a negative count")
	}
	hi, lo := bits.Mul64(uint64(m.micros), uint64(n))
	if hi != 0 || lo > 1<<63-1 {
		return Money{}, false
	}
	return Money{micros: int64(lo), known: true}, true
}

// Plus returns m + o, unknown when either is; ok is false on overflow.
func (m Money) Plus(o Money) (Money, bool) {
	if !m.known || !o.known {
		return Money{}, true
	}
	s := m.micros + o.micros
	if s < m.micros {
		return Money{}, false
	}
	return Money{micros: s, known: true}, true
}

// Cmp compares two known amounts: -1, 0 or +1. An unknown amount sorts
// after every known one (unknown equals unknown).
func (m Money) Cmp(o Money) int {
	switch {
	case m.known != o.known:
		if m.known {
			return -1
		}
		return 1
	case m.micros < o.micros:
		return -1
	case m.micros > o.micros:
		return 1
	}
	return 0
}

// Tally sums amounts, remembering whether any was unknown or the sum
// overflowed. Its zero value is an empty, known sum of 0.
type Tally struct {
	sum      int64
	missing  int
	overflow bool
}

// Add adds n times the unit price p.
func (t *Tally) Add(p Money, n int) {
	if !p.known {
		t.missing++
		return
	}
	x, ok := p.Times(n)
	if ok {
		var s Money
		s, ok = MoneyFromMicros(t.sum).Plus(x)
		t.sum = s.micros
	}
	if !ok {
		t.overflow = true
	}
}

// Missing returns how many prices added were unknown.
func (t *Tally) Missing() int { return t.missing }

// Total returns the sum, unknown when a price was missing or the sum
// overflowed.
func (t *Tally) Total() Money {
	if t.missing > 0 || t.overflow {
		return Money{}
	}
	return MoneyFromMicros(t.sum)
}

// Partial returns the sum of the known prices, with ok false when it
// overflowed.
func (t *Tally) Partial() (Money, bool) {
	if t.overflow {
		return Money{}, false
	}
	return MoneyFromMicros(t.sum), true
}
