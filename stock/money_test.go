package stock

import (
	"testing"

	"drawerfit/fault"
)

func TestParsePriceExact(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		in     string
		micros int64
		out    string
	}{
		{"0.012", 12_000, "0.012"},
		{"0.1", 100_000, "0.10"},
		{"0.30", 300_000, "0.30"},
		{"12", 12_000_000, "12.00"},
		{".5", 500_000, "0.50"},
		{"3.", 3_000_000, "3.00"},
		{"0.000001", 1, "0.000001"},
		{"1.2500000", 1_250_000, "1.25"}, // zeros past the sixth place change nothing
		{"1000000", 1_000_000_000_000, "1000000.00"},
		{"0", 0, "0.00"},
	} {
		m, err := ParsePrice(c.in)
		if err != nil || !m.Known() || m.Micros() != c.micros || m.String() != c.out {
			t.Errorf("ParsePrice(%q) = %d %q known %v, %v; want %d %q", c.in, m.Micros(), m.String(), m.Known(), err, c.micros, c.out)
		}
		back, err := ParsePrice(m.String())
		if err != nil || back != m {
			t.Errorf("%q does not read back: %v %v", m.String(), back, err)
		}
	}
	if m, err := ParsePrice(" "); err != nil || m.Known() {
		t.Errorf("empty price: %v %v", m, err)
	}
	for _, in := range []string{"-1", "1,2", "1.2.3", "$1", "1e3", "+1", "0.0000001", "1000000.01", "abc", "."} {
		if _, err := ParsePrice(in); !fault.Is(err, fault.Invalid) {
			t.Errorf("ParsePrice(%q) accepted: %v", in, err)
		}
	}
}

func TestMoneySums(t *testing.T) {
	t.Parallel()
	// The classic float failure: 0.1 + 0.2 prints 0.30000000000000004 as a
	// float64; as money it is 0.30 exactly.
	a, _ := ParsePrice("0.1")
	b, _ := ParsePrice("0.2")
	s, ok := a.Plus(b)
	if !ok || s.String() != "0.30" {
		t.Fatalf("0.1 + 0.2 = %q", s)
	}
	var tl Tally
	tl.Add(a, 3)
	tl.Add(b, 7)
	if got := tl.Total().String(); got != "1.70" {
		t.Errorf("3 × 0.1 + 7 × 0.2 = %q", got)
	}
	tl.Add(Money{}, 1)
	if tl.Total().Known() || tl.Missing() != 1 {
		t.Errorf("a missing price must make the total unknown")
	}
	if p, ok := tl.Partial(); !ok || p.String() != "1.70" {
		t.Errorf("partial %v", p)
	}
	big := MoneyFromMicros(MaxPrice * moneyScale)
	if _, ok := big.Times(MaxQuantity); ok {
		t.Errorf("MaxPrice × MaxQuantity fits in int64 micros? It must overflow (1e21)")
	}
	var over Tally
	over.Add(big, MaxQuantity)
	if over.Total().Known() {
		t.Errorf("overflowed total is known")
	}
	if Money.Cmp(MoneyFromMicros(1), Money{}) != -1 || Money.Cmp(Money{}, Money{}) != 0 {
		t.Errorf("unknown must sort after known")
	}
}

func TestParseVoltage(t *testing.T) {
	t.Parallel()
	for in, want := range map[string]float64{"50": 50, "50V": 50, "6.3 V": 6.3, "1kV": 1000, "1k": 1000, "500mV": 0.5, "630v": 630, "": 0, "2.5": 2.5} {
		got, err := ParseVoltage(in)
		if err != nil || got != want {
			t.Errorf("ParseVoltage(%q) = %v, %v; want %v", in, got, err, want)
		}
		if back, err := ParseVoltage(compactVoltage(got)); err != nil || back != got {
			t.Errorf("%q does not read back: %v %v", compactVoltage(got), back, err)
		}
	}
	for _, in := range []string{"high", "-50", "50A", "1MV", "0.05", "200kV", "1,5", "1.2.3", "V"} {
		if _, err := ParseVoltage(in); !fault.Is(err, fault.Invalid) {
			t.Errorf("ParseVoltage(%q) accepted: %v", in, err)
		}
	}
	for v, want := range map[float64]string{50: "50 V", 6.3: "6.3 V", 0.5: "500 mV", 1500: "1500 V", 10e3: "10 kV", 0: ""} {
		if got := FormatVoltage(v); got != want {
			t.Errorf("FormatVoltage(%v) = %q, want %q", v, got, want)
		}
	}
}
