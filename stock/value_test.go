package stock

import (
	"math"
	"strconv"
	"strings"
	"testing"

	"drawerfit/fault"
)

func TestParseKind(t *testing.T) {
	t.Parallel()
	cases := []struct {
		in   string
		want Kind
	}{
		{"resistor", Resistor}, {"Resistor", Resistor}, {"R", Resistor}, {" r ", Resistor},
		{"capacitor", Capacitor}, {"CAPACITOR", Capacitor}, {"C", Capacitor}, {"c", Capacitor},
	}
	for _, c := range cases {
		t.Run(c.in, func(t *testing.T) {
			got, err := ParseKind(c.in)
			if err != nil || got != c.want {
				t.Fatalf("ParseKind(%q) = %v, %v", c.in, got, err)
			}
		})
	}
	for _, in := range []string{"", "inductor", "L", "res", "RC"} {
		t.Run("refuses "+in, func(t *testing.T) {
			if _, err := ParseKind(in); !fault.Is(err, fault.Invalid) || !strings.Contains(err.Error(), strconv.Quote(in)) {
				t.Fatalf("ParseKind(%q): %v", in, err)
			}
		})
	}
	if Resistor.String() != "resistor" || Capacitor.String() != "capacitor" {
		t.Fatal("Kind.String")
	}
}

func TestParseValue(t *testing.T) {
	t.Parallel()
	R, C := Resistor, Capacitor
	cases := []struct {
		in   string
		k    Kind
		want float64
		src  string
	}{
		// IEC 60062 letter-and-digit code (docs/check-values.md, "Value and tolerance codes").
		{"R47", R, 0.47, "IEC 60062"},
		{"4R7", R, 4.7, "IEC 60062"},
		{"470R", R, 470, "IEC 60062"},
		{"4K7", R, 4700, "IEC 60062"},
		{"47K", R, 47000, "IEC 60062"},
		{"47K3", R, 47300, "IEC 60062"},
		{"4M7", R, 4.7e6, "IEC 60062"},
		{"1M0", R, 1e6, "IEC 60062"},
		{"8K2", R, 8200, "IEC 60062"},
		{"4n7", C, 4.7e-9, "IEC 60062"},
		{"2n2", C, 2.2e-9, "IEC 60062"},
		{"10p", C, 10e-12, "IEC 60062"},
		{"p68", C, 0.68e-12, "IEC 60062"},
		{"1µ0", C, 1e-6, "IEC 60062"},
		{"4u7", C, 4.7e-6, "IEC 60062, u for µ is common practice"},
		// Lower-case k in the code is common practice, no source.
		{"4k7", R, 4700, "common practice"},
		{"2N2", C, 2.2e-9, "common practice"},
		// SI prefixes and units (the examples).
		{"4700", R, 4700, "SI"},
		{"4.7k", R, 4700, "SI"},
		{"4.7 kΩ", R, 4700, "SI"},
		{"4.7k\u2126", R, 4700, "SI, ohm sign"},
		{"4.7kohm", R, 4700, "SI"},
		{"4.7 kOhms", R, 4700, "SI"},
		{"1M", R, 1e6, "SI"},
		{"1 MΩ", R, 1e6, "SI"},
		{"2.2G", R, 2.2e9, "SI"},
		{"100m", R, 0.1, "SI, milli"},
		{"4.7e3", R, 4700, "SI"},
		{".47", R, 0.47, "SI"},
		{"47nF", C, 47e-9, "SI"},
		{"0.047uF", C, 47e-9, "SI"},
		{"0.047µF", C, 47e-9, "SI, micro sign"},
		{"0.047μF", C, 47e-9, "SI, Greek mu"},
		{"47000p", C, 47e-9, "SI"},
		{"470 pF", C, 470e-12, "SI"},
		{"47nf", C, 47e-9, "SI, lower-case unit after a prefix"},
		{"2n2F", C, 2.2e-9, "IEC 60062 code with unit"},
		{"4.7e-9", C, 4.7e-9, "farads in exponent form"},
		{"1F", C, 1, "SI"},
		{"1mF", C, 1e-3, "SI"},
		{"  4K7  ", R, 4700, "surrounding space"},
	}
	for _, c := range cases {
		t.Run(c.k.String()+" "+c.in, func(t *testing.T) {
			got, err := ParseValue(c.in, c.k)
			if err != nil {
				t.Fatalf("ParseValue(%q) (%s): %v", c.in, c.src, err)
			}
			// Exact: the parser reads the decimal text, so 4K7 is the
			// float64 nearest to 4700.
			if got != c.want {
				t.Fatalf("ParseValue(%q) = %v, want %v (%s)", c.in, got, c.want, c.src)
			}
		})
	}
}

func TestParseValueRefuses(t *testing.T) {
	t.Parallel()
	R, C := Resistor, Capacitor
	cases := []struct {
		in   string
		k    Kind
		want string // part of the reason
	}{
		{"", R, "empty"},
		{"4k7k", R, "ambiguous"},
		{"1kk", R, "more than one prefix"},
		{"1.2.3", R, "malformed"},
		{"1,5k", R, "malformed"},
		{"4.7x", R, "unknown prefix"},
		{"4.7 kQ", R, "unknown unit"},
		{"-1k", R, "negative"},
		{"+1k", R, "sign"},
		{"0", R, "zero"},
		{"0R0", R, "zero"},
		{"NaN", R, "not a number"},
		{"inf", C, "not a number"},
		{"1e999", R, "out of range"},
		{"1e3k", R, "exponent and a prefix"},
		{"4.7F", R, "for capacitors"},
		{"4n7", R, "for capacitors"},
		{"4.7kω", R, "lowercase omega"},
		{"1 k7", R, "digits after the prefix"},
		{"4.7k7", R, "digits after the prefix"},
		{"k", R, "followed by digits"},
		{"5T", R, "unknown prefix"},
		{"2e13", R, "outside"},
		{"4.7k", C, "for resistors"},
		{"4.7kF", C, "for resistors"},
		{"10Ω", C, "for resistors"},
		{"1M", C, "ambiguous"},
		{"1MF", C, "ambiguous"},
		{"10f", C, "femto"},
		{"103", C, "three-digit marking it would be 10 nF"},
		{"471", C, "three-digit marking it would be 470 pF"},
		{"0.1", C, "ambiguous for a capacitor"},
		{"4700", C, "ambiguous for a capacitor"},
		{"1e-20", C, "outside"},
		{"5000F", C, "outside"},
		{"12345678901234567890123456789012345678901k", R, "too long"},
		{"4.7\xffk", R, "UTF-8"},
	}
	for _, c := range cases {
		t.Run(c.k.String()+" "+c.in, func(t *testing.T) {
			v, err := ParseValue(c.in, c.k)
			if err == nil {
				t.Fatalf("ParseValue(%q) = %v, want an error", c.in, v)
			}
			if !fault.Is(err, fault.Invalid) {
				t.Errorf("not a fault.Invalid: %v", err)
			}
			if !strings.Contains(err.Error(), strconv.Quote(c.in)) {
				t.Errorf("error %q does not quote the text", err)
			}
			if !strings.Contains(err.Error(), c.want) {
				t.Errorf("error %q does not say %q", err, c.want)
			}
		})
	}
}

func TestFormatValue(t *testing.T) {
	t.Parallel()
	R, C := Resistor, Capacitor
	cases := []struct {
		v    float64
		k    Kind
		want string
	}{
		{4700, R, "4.7 kΩ"},
		{47300, R, "47.3 kΩ"},
		{1e6, R, "1 MΩ"},
		{100, R, "100 Ω"},
		{0.47, R, "0.47 Ω"},
		{2.2e9, R, "2.2 GΩ"},
		{2.2e-9, C, "2.2 nF"},
		{470e-12, C, "470 pF"},
		{0.68e-12, C, "0.68 pF"},
		{1e-6, C, "1 µF"},
		{4.7e-6, C, "4.7 µF"},
		{4700e-6, C, "4700 µF"},
		{1.5, C, "1.5 F"},
		{999.9999999e3, R, "1 MΩ"}, // rounds to six figures, then picks the prefix
		{3386.2746, R, "3.38627 kΩ"},
	}
	for _, c := range cases {
		t.Run(c.want, func(t *testing.T) {
			if got := FormatValue(c.v, c.k); got != c.want {
				t.Fatalf("FormatValue(%v, %v) = %q, want %q", c.v, c.k, got, c.want)
			}
		})
	}
	if got := FormatValuePrec(3386.2746, R, 4); got != "3.386 kΩ" {
		t.Errorf("FormatValuePrec 4 figures = %q", got)
	}
	// sig 0 keeps every digit needed to read back the same float64.
	third := 1.0 / 3 * 1e-9
	if got, err := ParseValue(FormatValuePrec(third, C, 0), C); err != nil || got != third {
		t.Errorf("FormatValuePrec exact: %q reads back as %v, %v", FormatValuePrec(third, C, 0), got, err)
	}
}

// TestValueRoundTrip checks that what the package writes it reads back as
// the same float64, for every value of E192 and E24 over the useful
// decades.
func TestValueRoundTrip(t *testing.T) {
	t.Parallel()
	for _, s := range []Series{E24, E192} {
		for _, m := range s.Values() {
			for e := -13; e <= 9; e++ {
				v, _ := strconv.ParseFloat(strconv.FormatFloat(m, 'f', -1, 64)+"e"+strconv.Itoa(e), 64)
				for _, k := range []Kind{Resistor, Capacitor} {
					lo, hi := MinResistance, MaxResistance
					if k == Capacitor {
						lo, hi = MinCapacitance, MaxCapacitance
					}
					if v < lo || v > hi {
						continue
					}
					text := compactValue(v, k)
					got, err := ParseValue(text, k)
					if err != nil || got != v {
						t.Fatalf("%v %v written %q read back as %v, %v", k, v, text, got, err)
					}
					if shown := FormatValuePrec(v, k, 0); !strings.HasSuffix(shown, k.Unit()) {
						t.Fatalf("FormatValue(%v) = %q", v, shown)
					}
				}
			}
		}
	}
}

func TestParseTolerance(t *testing.T) {
	t.Parallel()
	cases := []struct {
		in   string
		want float64
		src  string
	}{
		{"1%", 0.01, "percent"},
		{"±0.5%", 0.005, "percent with sign"},
		{"+/- 5 %", 0.05, "percent with sign"},
		{"0.25%", 0.0025, "percent"},
		// IEC 60062 letters (docs/check-values.md, "Value and tolerance codes"; B from memory).
		{"B", 0.001, "IEC 60062"},
		{"C", 0.0025, "IEC 60062"},
		{"D", 0.005, "IEC 60062"},
		{"F", 0.01, "IEC 60062"},
		{"G", 0.02, "IEC 60062"},
		{"J", 0.05, "IEC 60062"},
		{"K", 0.1, "IEC 60062"},
		{"M", 0.2, "IEC 60062"},
		{"j", 0.05, "IEC 60062, lower case"},
	}
	for _, c := range cases {
		t.Run(c.in, func(t *testing.T) {
			got, err := ParseTolerance(c.in)
			if err != nil || got != c.want {
				t.Fatalf("ParseTolerance(%q) = %v, %v; want %v (%s)", c.in, got, err, c.want, c.src)
			}
			if back, err := ParseTolerance(FormatTolerance(got)); err != nil || back != got {
				t.Fatalf("round trip via %q gave %v, %v", FormatTolerance(got), back, err)
			}
		})
	}
	for _, in := range []string{"", "1", "0.01", "0%", "-1%", "60%", "Z", "X", "+80/-20%", "1.2.3%", "1e1%", "%", "five%"} {
		t.Run("refuses "+in, func(t *testing.T) {
			if f, err := ParseTolerance(in); !fault.Is(err, fault.Invalid) || !strings.Contains(err.Error(), strconv.Quote(in)) {
				t.Fatalf("ParseTolerance(%q) = %v, %v", in, f, err)
			}
		})
	}
	// Below 10 pF the letters B C D (F G from memory) are absolute (IEC 60062).
	if _, err := ParseToleranceFor("C", Capacitor, 4.7e-12); !fault.Is(err, fault.Invalid) {
		t.Errorf("C on 4.7 pF: %v", err)
	}
	if f, err := ParseToleranceFor("C", Capacitor, 47e-12); err != nil || f != 0.0025 {
		t.Errorf("C on 47 pF: %v, %v", f, err)
	}
	if f, err := ParseToleranceFor("5%", Capacitor, 4.7e-12); err != nil || f != 0.05 {
		t.Errorf("5%% on 4.7 pF: %v, %v", f, err)
	}
	if f, err := ParseToleranceFor("D", Resistor, 4.7); err != nil || f != 0.005 {
		t.Errorf("D on a resistor: %v, %v", f, err)
	}
	for f, want := range map[float64]string{0: "", 0.01: "1%", 0.005: "0.5%", 0.0025: "0.25%", 0.1: "10%", 0.2: "20%"} {
		if got := FormatTolerance(f); got != want {
			t.Errorf("FormatTolerance(%v) = %q, want %q", f, got, want)
		}
	}
}

func TestDielectrics(t *testing.T) {
	t.Parallel()
	const P, C, A = Precision, Caution, Avoid
	cases := []struct {
		in, norm string
		grade    Grade
	}{
		// Class 1 ceramics suit a signal path, class 2 ceramics,
		// electrolytics and tantalum do not (Op Amps for Everyone 16.8.3 as
		// quoted in docs/check-values.md, "Practical rules"). Which films
		// count as precision (PP, PS, PPS, PTFE, mica) and which as
		// general-purpose (PET, PEN, PC): common practice, no source.
		{"C0G", "C0G", P},
		{"cog", "C0G", P},
		{"NP0", "NP0", P},
		{"npo", "NP0", P},
		{"pp", "PP", P},
		{"Polypropylene", "PP", P},
		{"PPS", "PPS", P},
		{"polystyrene", "PS", P},
		{"silver mica", "mica", P},
		{"PTFE", "PTFE", P},
		{"polyester", "PET", C},
		{"MKT", "PET", C},
		{"PEN", "PEN", C},
		{"polycarbonate", "PC", C},
		{"film", "film", C},
		{"x7r", "X7R", A},
		{"X5R", "X5R", A},
		{"Y5V", "Y5V", A},
		{"z5u", "Z5U", A},
		{"Electrolytic", "electrolytic", A},
		{"aluminium electrolytic", "electrolytic", A},
		{"tantalum", "tantalum", A},
		{"", "", A},
		{"  paper  oil ", "paper oil", A},
	}
	for _, c := range cases {
		t.Run(c.in, func(t *testing.T) {
			if got := NormalizeDielectric(c.in); got != c.norm {
				t.Errorf("NormalizeDielectric(%q) = %q, want %q", c.in, got, c.norm)
			}
			if got := SignalGrade(c.in); got != c.grade {
				t.Errorf("SignalGrade(%q) = %v, want %v", c.in, got, c.grade)
			}
			if IsPrecisionDielectric(c.in) != (c.grade == Precision) || SignalPathOK(c.in) != (c.grade != Avoid) {
				t.Errorf("%q: precision %v, signal path %v", c.in, IsPrecisionDielectric(c.in), SignalPathOK(c.in))
			}
			if (CautionText(c.in) != "") != (c.grade == Caution) {
				t.Errorf("%q: caution text %q", c.in, CautionText(c.in))
			}
		})
	}
}

func TestItemProblems(t *testing.T) {
	t.Parallel()
	good := Item{Kind: Capacitor, Value: 1e-9, Tolerance: 0.05, Quantity: 10, Dielectric: "C0G", Note: "two\nlines"}
	if p := good.Problems(); p != nil {
		t.Fatalf("good item: %v", p)
	}
	cases := []struct {
		name  string
		edit  func(*Item)
		field string
	}{
		{"bad kind", func(it *Item) { it.Kind = 7 }, "kind"},
		{"NaN value", func(it *Item) { it.Value = math.NaN() }, "value"},
		{"tolerance above 50%", func(it *Item) { it.Tolerance = 0.6 }, "tolerance"},
		{"negative quantity", func(it *Item) { it.Quantity = -1 }, "quantity"},
		{"huge quantity", func(it *Item) { it.Quantity = MaxQuantity + 1 }, "quantity"},
		{"dielectric on a resistor", func(it *Item) { it.Kind, it.Value = Resistor, 1000 }, "dielectric"},
		{"control character", func(it *Item) { it.Package = "08\x0705" }, "package"},
		{"line break in location", func(it *Item) { it.Location = "A\n1" }, "location"},
		{"long note", func(it *Item) { it.Note = strings.Repeat("x", MaxText+1) }, "note"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			it := good
			c.edit(&it)
			p := it.Problems()
			if len(p) == 0 || p[0].Field != c.field {
				t.Fatalf("Problems() = %v, want one about %s", p, c.field)
			}
			if !fault.Is(it.Validate(), fault.Invalid) {
				t.Fatal("Validate is not fault.Invalid")
			}
		})
	}
	a := Item{Kind: Resistor, Value: 4700, Tolerance: 0.01, Package: "0805", Location: "A1", Quantity: 3, Note: "x"}
	b := Item{Kind: Resistor, Value: 4700, Tolerance: 0.01, Package: "0805", Location: "a1", Quantity: 9}
	if a.Identity() != b.Identity() {
		t.Error("identity should ignore quantity, note and ASCII case")
	}
	b.Tolerance = 0.05
	if a.Identity() == b.Identity() {
		t.Error("identity should include tolerance")
	}
}
