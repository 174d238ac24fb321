package stock

import (
	"bytes"
	"errors"
	"fmt"
	"reflect"
	"strings"
	"testing"

	"drawerfit/fault"
)

func csvProblems(t *testing.T, err error) *CSVError {
	t.Helper()
	if !fault.Is(err, fault.Invalid) {
		t.Fatalf("error %v is not fault.Invalid", err)
	}
	var ce *CSVError
	if !errors.As(err, &ce) {
		t.Fatalf("no *CSVError in %v", err)
	}
	return ce
}

func TestReadCSV(t *testing.T) {
	t.Parallel()
	in := "\ufeffKind,VALUE, Quantity ,tolerance,location,dielectric,package,note\r\n" +
		"R,4k7,50,F,A1,,0805,\r\n" +
		"capacitor,2n2,20,5%,B3,cog,0805,\"signal, C0G\"\r\n" +
		"\r\n" +
		",,,,,,,\r\n" +
		"C,\"100 nF\",10,10%,\"reel-3\",polyester,radial,\"two\r\nlines\"\r\n" +
		"r,1M0,3,,D6,,axial,'=SUM(A1)\r\n"
	items, err := ReadCSV(strings.NewReader(in))
	if err != nil {
		t.Fatal(err)
	}
	want := []Item{
		{Kind: Resistor, Value: 4700, Tolerance: 0.01, Quantity: 50, Location: "A1", Package: "0805"},
		{Kind: Capacitor, Value: 2.2e-9, Tolerance: 0.05, Quantity: 20, Location: "B3", Dielectric: "C0G", Package: "0805", Note: "signal, C0G"},
		{Kind: Capacitor, Value: 100e-9, Tolerance: 0.1, Quantity: 10, Location: "reel-3", Dielectric: "PET", Package: "radial", Note: "two\nlines"}, // encoding/csv reads a quoted CRLF as LF
		{Kind: Resistor, Value: 1e6, Quantity: 3, Location: "D6", Package: "axial", Note: "=SUM(A1)"},
	}
	if !reflect.DeepEqual(items, want) {
		t.Fatalf("ReadCSV:\n got %+v\nwant %+v", items, want)
	}
}

func TestReadCSVMinimalColumns(t *testing.T) {
	t.Parallel()
	items, err := ReadCSV(strings.NewReader("quantity,value,kind\n7,10k,resistor\n"))
	if err != nil || len(items) != 1 || items[0].Value != 10e3 || items[0].Quantity != 7 {
		t.Fatalf("%+v %v", items, err)
	}
}

func TestReadCSVRefuses(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name string
		in   string
		want []CSVProblem
	}{
		{"empty file", "", []CSVProblem{{1, "", "the file is empty"}}},
		{"unknown column", "kind,value,quantity,colour\nR,1k,1,red\n", []CSVProblem{{1, "", `unknown column "colour"`}}},
		{"missing column", "kind,value\nR,1k\n", []CSVProblem{{1, "", `required column "quantity" is missing`}}},
		{"repeated column", "kind,value,quantity,Value\nR,1k,1,2k\n", []CSVProblem{{1, "", `column "value" appears twice`}}},
		{"nameless column", "kind,value,quantity,\nR,1k,1,\n", []CSVProblem{{1, "", "column 4 has no name"}}},
		{"header only with data first", "R,1k,1\n", []CSVProblem{{1, "", `unknown columns "R", "1k", "1"`}, {1, "", `required column "kind"`}, {1, "", `required column "value"`}, {1, "", `required column "quantity"`}}},
		{"bad cells on several lines",
			"kind,value,quantity,tolerance,dielectric\n" +
				"R,1k,10,1%,\n" +
				"R,4k7k,10,1%,\n" + // line 3: value
				"X,1k,10,1%,\n" + // line 4: kind
				"C,103,-5,Z,C0G\n" + // line 5: value, tolerance, quantity
				"R,2k2,10,1%,C0G\n" + // line 6: dielectric on a resistor
				"R,1k,ten,1%,\n", // line 7: quantity
			[]CSVProblem{
				{3, "value", `"4k7k": ambiguous`},
				{4, "kind", `kind "X"`},
				{5, "value", "three-digit marking"},
				{5, "tolerance", `"Z": asymmetric`},
				{5, "quantity", `"-5" is negative`},
				{6, "dielectric", "a resistor has no dielectric"},
				{7, "quantity", `"ten" is not a whole number`},
			}},
		{"field count", "kind,value,quantity\nR,1k\nR,1k,1,2\n", []CSVProblem{{2, "", "has 2 fields, the header has 3"}, {3, "", "has 4 fields"}}},
		{"bare quote", "kind,value,quantity\nR,1k,1\nR,4\"7,1\n", []CSVProblem{{3, "", "malformed CSV"}}},
		{"line numbers after a quoted line break", "kind,value,quantity,note\nR,1k,1,\"a\nb\"\nR,0,1,\n", []CSVProblem{{4, "value", "zero"}}},
		{"invalid UTF-8", "kind,value,quantity,note\nR,1k,1,\xff\n", []CSVProblem{{2, "note", "UTF-8"}}},
		{"control character", "kind,value,quantity,location\nR,1k,1,A\x011\n", []CSVProblem{{2, "location", "control character"}}},
		{"shop attributes",
			"kind,value,quantity,voltage,price,min,pack,supplier-ref\n" +
				"C,10n,10,50V,0.012,50,100,bag 7\n" +
				"C,10n,10,high,-1,-5,0,\n" + // line 3: voltage, price, min
				"C,22n,10,16,\"1,2\",1.5,x,\n" + // line 4: a comma-decimal price; min and pack not whole
				"C,47n,10,-50V,0.0000001,,,\n" + // line 5: negative voltage, too many places
				"C,47n,10,2MV,1e3,,,\n" + // line 6: unknown prefix, exponent
				"C,47n,10,200kV,1000001,,,\n", // line 7: above the bounds
			[]CSVProblem{
				{3, "voltage", `voltage "high" is not a number`},
				{3, "price", `price "-1" is negative`},
				{3, "min", `min "-5" is negative`},
				{4, "price", `price "1,2" has a comma`},
				{4, "min", `min "1.5" is not a whole number`},
				{4, "pack", `pack "x" is not a whole number`},
				{5, "voltage", "is negative"},
				{5, "price", "more than 6 decimal places"},
				{6, "voltage", `unknown prefix or unit "MV"`},
				{6, "price", "not a decimal number"},
				{7, "voltage", "outside 100 mV to 100 kV"},
				{7, "price", "above 1000000"},
			}},
		{"small capacitor letter tolerance", "kind,value,quantity,tolerance\nC,4p7,1,C\n", []CSVProblem{{2, "tolerance", "absolute tolerance in pF"}}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			items, err := ReadCSV(strings.NewReader(c.in))
			if items != nil {
				t.Errorf("items returned with an error: %+v", items)
			}
			ce := csvProblems(t, err)
			if len(ce.Problems) != len(c.want) {
				t.Fatalf("problems:\n%v\nwant %d of them", ce, len(c.want))
			}
			for i, w := range c.want {
				p := ce.Problems[i]
				if p.Line != w.Line || p.Column != w.Column || !strings.Contains(p.Reason, w.Reason) {
					t.Errorf("problem %d = %+v, want line %d, column %q, reason containing %q", i, p, w.Line, w.Column, w.Reason)
				}
			}
		})
	}
}

func TestReadCSVCapsTheList(t *testing.T) {
	t.Parallel()
	var b strings.Builder
	b.WriteString("kind,value,quantity\n")
	for i := 0; i < MaxCSVProblems+15; i++ {
		b.WriteString("R,0,1\n")
	}
	_, err := ReadCSV(strings.NewReader(b.String()))
	ce := csvProblems(t, err)
	if len(ce.Problems) != MaxCSVProblems || ce.More != 15 {
		t.Fatalf("%d listed, %d more", len(ce.Problems), ce.More)
	}
	if msg := err.Error(); !strings.Contains(msg, fmt.Sprintf("has %d problems", MaxCSVProblems+15)) || !strings.Contains(msg, "and 15 more") {
		t.Fatalf("message %q", msg)
	}
}

func TestCSVRoundTrip(t *testing.T) {
	t.Parallel()
	items := []Item{
		{Kind: Resistor, Value: 4700, Tolerance: 0.01, Quantity: 50, Package: "0805", Location: "A1",
			Price: MoneyFromMicros(12_000), Min: 50, Pack: 1000, SupplierRef: "bench order 4K7/0805"},
		{Kind: Resistor, Value: 47300, Tolerance: 0.001, Quantity: 3, Package: "axial", Location: "A2", Note: "E192 spare"},
		{Kind: Resistor, Value: 0.47, Tolerance: 0.05, Quantity: 10, Location: "-shunts-"},
		{Kind: Capacitor, Value: 2.2e-9, Tolerance: 0.05, Quantity: 20, Dielectric: "C0G", Location: "B3", Note: "+ for the 1 kHz low-pass",
			Voltage: 50, Price: MoneyFromMicros(300_000), Min: 10},
		{Kind: Capacitor, Value: 0.68e-12, Quantity: 5, Dielectric: "NP0", Location: "@top", Note: "'quoted",
			Voltage: 500, SupplierRef: "=HYPERLINK(\"x\")"},
		{Kind: Capacitor, Value: 4700e-6, Tolerance: 0.2, Quantity: 2, Dielectric: "electrolytic", Package: "radial", Note: "=1+1",
			Voltage: 6.3, Price: MoneyFromMicros(0), Pack: 1},
		{Kind: Capacitor, Value: 1e-6, Quantity: 4, Dielectric: "PP", Voltage: 1.5e3, Price: MoneyFromMicros(1_000_000_000_000)},
		{Kind: Capacitor, Value: 1e-9, Quantity: 4, Dielectric: "PP", Voltage: 0.1, Price: MoneyFromMicros(1)},
		{Kind: Capacitor, Value: 1.0 / 3 * 1e-6, Tolerance: 0.0025, Quantity: 1, Dielectric: "PP", Note: "line one\nline two, \"quoted\""},
		{Kind: Capacitor, Value: 2.5, Quantity: 1, Note: "''=both"},
		// Amplifier rows: invented labels; every figure stated, none, and
		// figures that need every digit to read back.
		{Kind: OpAmp, Name: "GP-quad", Quantity: 6, Package: "DIP-14", Location: "D1", Channels: 4,
			GBW: 1e6, DCGain: 100, Slew: 0.5, Supply: "±15 V", Note: "slow, general purpose"},
		{Kind: OpAmp, Name: "=odd label", Quantity: 0, Channels: 1},
		{Kind: OpAmp, Name: "QA-10", Quantity: 12, Package: "SO-8", Location: "D2", Channels: 2,
			GBW: 10.37e6, DCGain: 96.5, Slew: 1.0 / 3, Supply: "3–5.5 V"},
		{Kind: OpAmp, Name: "odd-gbw", Quantity: 1, Channels: 1, GBW: 1.0 / 3 * 1e7},
	}
	var buf bytes.Buffer
	if err := WriteCSV(&buf, items); err != nil {
		t.Fatal(err)
	}
	out := buf.String()
	for _, want := range []string{"kind,value,tolerance,quantity,package,dielectric,location,note,voltage,price,min,pack,supplier-ref,channels,gbw,dc-gain,slew,supply\n",
		"resistor,4.7k,1%,50,0805,,A1,,,0.012,50,1000,bench order 4K7/0805,,,,,\n",
		"capacitor,2.2nF,5%,20,,C0G,B3,'+ for the 1 kHz low-pass,50V,0.30,10,,,,,,,\n",
		",'@top,''quoted,500V,,,,\"'=HYPERLINK(\"\"x\"\")\",,,,,\n", ",'=1+1,6.3V,0.00,,1,,,,,,\n",
		",PP,,,1500V,1000000.00,,,,,,,,\n", ",PP,,,100mV,0.000001,,,,,,,,\n",
		"opamp,GP-quad,,6,DIP-14,,D1,\"slow, general purpose\",,,,,,4,1M,100,0.5,±15 V\n",
		"opamp,'=odd label,,0,,,,,,,,,,1,,,,\n", "opamp,QA-10,,12,SO-8,,D2,,,,,,,2,10.37M,96.5,"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
	back, err := ReadCSV(&buf)
	if err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	if !reflect.DeepEqual(back, items) {
		t.Fatalf("round trip:\n got %+v\nwant %+v", back, items)
	}
	if err := WriteCSV(&buf, []Item{{Kind: Resistor, Value: 0, Quantity: 1}}); !fault.Is(err, fault.Invalid) {
		t.Fatalf("invalid item written: %v", err)
	}
}

// TestReadCSVAmplifierProblems checks that bad amplifier figures are
// refused with their line and column, and that amplifier columns on a
// passive row are refused.
func TestReadCSVAmplifierProblems(t *testing.T) {
	t.Parallel()
	in := "kind,value,quantity,channels,gbw,dc-gain,slew,supply\n" +
		"opamp,QA-10,4,3,10M,100,,\n" + // line 2: three channels
		"op-amp,QA-11,4,2,fast,,,\n" + // line 3: gbw not a frequency
		"amp,QA-12,4,1,1M,-20,,\n" + // line 4: negative gain
		"opamp,,4,1,1M,,,\n" + // line 5: no label
		"resistor,4k7,10,2,,,,\n" + // line 6: channels on a resistor
		"opamp,QA-13,1,4,2.5MHz,110 dB,7 V/us,±5 V\n" // good
	_, err := ReadCSV(strings.NewReader(in))
	ce := csvProblems(t, err)
	want := []CSVProblem{
		{2, "channels", `channels "3" is not 1, 2 or 4`},
		{3, "gbw", `gain-bandwidth "fast" is not a frequency`},
		{4, "dc-gain", `DC gain "-20" must be above 0 dB`},
		{5, "value", "needs a label"},
		{6, "channels", "only amplifier rows have channels"},
	}
	if len(ce.Problems) != len(want) {
		t.Fatalf("problems:\n%v\nwant %d", ce, len(want))
	}
	for i, w := range want {
		p := ce.Problems[i]
		if p.Line != w.Line || p.Column != w.Column || !strings.Contains(p.Reason, w.Reason) {
			t.Errorf("problem %d = %+v, want %+v", i, p, w)
		}
	}
	items, err := ReadCSV(strings.NewReader("kind,value,quantity,channels,gbw,dc-gain,slew,supply\n" +
		"opamp,QA-13,1,4,2.5MHz,110 dB,7 V/us,±5 V\nAMP,plain,2,,,,,\n"))
	if err != nil {
		t.Fatal(err)
	}
	wantItems := []Item{
		{Kind: OpAmp, Name: "QA-13", Quantity: 1, Channels: 4, GBW: 2.5e6, DCGain: 110, Slew: 7, Supply: "±5 V"},
		{Kind: OpAmp, Name: "plain", Quantity: 2, Channels: 1}, // channels default to a single
	}
	if !reflect.DeepEqual(items, wantItems) {
		t.Fatalf("got %+v\nwant %+v", items, wantItems)
	}
	if got := items[1].DCGainDB(); got != DefaultDCGainDB {
		t.Errorf("default DC gain %v dB", got)
	}
}

func TestNeutraliseRestore(t *testing.T) {
	t.Parallel()
	for _, s := range []string{"", "A1", "=A1", "+1", "-1", "@x", "\tx", "'", "''", "'=", "'x", "x'", "=", "'''"} {
		if got := restore(neutralise(s)); got != s {
			t.Errorf("restore(neutralise(%q)) = %q", s, got)
		}
		if n := neutralise(s); n != "" && strings.ContainsRune(formulaStart, rune(n[0])) {
			t.Errorf("neutralise(%q) = %q still starts a formula", s, n)
		}
	}
}

func TestParseQuantity(t *testing.T) {
	t.Parallel()
	for in, want := range map[string]int{"0": 0, "7": 7, " 120 ": 120, "1000000000": MaxQuantity} {
		if got, err := ParseQuantity(in); err != nil || got != want {
			t.Errorf("ParseQuantity(%q) = %v, %v", in, got, err)
		}
	}
	for _, in := range []string{"", "-1", "1.5", "1e3", "1,000", "+3", "1000000001", "99999999999999999999"} {
		if _, err := ParseQuantity(in); !fault.Is(err, fault.Invalid) {
			t.Errorf("ParseQuantity(%q): %v", in, err)
		}
	}
}

// TestReadCSVIgnoresColumns: unknown columns are refused with their
// names; ignored on request, all of them or by name, and listed.
func TestReadCSVIgnoresColumns(t *testing.T) {
	t.Parallel()
	const file = "kind,value,quantity,MPN,supplier\nR,1k,5,ABC-1,shop\n"
	_, _, err := ReadCSVWith(strings.NewReader(file), CSVOptions{})
	var ce *CSVError
	if !errors.As(err, &ce) || !reflect.DeepEqual(ce.Unknown, []string{"MPN", "supplier"}) ||
		!strings.Contains(err.Error(), `unknown columns "MPN", "supplier"`) {
		t.Fatalf("strict: %v", err)
	}
	for _, opts := range []CSVOptions{{IgnoreUnknown: true}, {Ignore: []string{"mpn", "Supplier"}}} {
		items, info, err := ReadCSVWith(strings.NewReader(file), opts)
		if err != nil || len(items) != 1 || items[0].Quantity != 5 || !reflect.DeepEqual(info.Ignored, []string{"MPN", "supplier"}) {
			t.Errorf("%+v: %v %+v %v", opts, items, info, err)
		}
	}
	// Naming only one leaves the other refused.
	if _, _, err := ReadCSVWith(strings.NewReader(file), CSVOptions{Ignore: []string{"mpn"}}); err == nil || !strings.Contains(err.Error(), `"supplier"`) {
		t.Errorf("one named: %v", err)
	}
	// A required column cannot be ignored away.
	if _, _, err := ReadCSVWith(strings.NewReader(file), CSVOptions{IgnoreUnknown: true, Ignore: []string{"quantity"}}); err != nil {
		t.Errorf("ignoring a required column: %v", err)
	}
}

// TestReadCSVMessagesQuoteExcerpts: a huge or control-laden cell is quoted
// short and escaped; UTF-16 gets advice about the encoding.
func TestReadCSVMessagesQuoteExcerpts(t *testing.T) {
	t.Parallel()
	huge := strings.Repeat("x", 10<<20)
	_, err := ReadCSV(strings.NewReader("kind,value,quantity," + huge + "\n"))
	if err == nil || len(err.Error()) > 2000 {
		t.Errorf("a 10 MB header cell gives a message of %d bytes", len(err.Error()))
	}
	_, err = ReadCSV(strings.NewReader("kind,value,quantity,\x1b[31mred\n"))
	if err == nil || strings.ContainsRune(err.Error(), 0x1b) || !strings.Contains(err.Error(), `\x1b[31mred`) {
		t.Errorf("escape sequence: %q", err)
	}
	_, err = ReadCSV(strings.NewReader("kind,value,quantity\nR," + huge + ",1\n"))
	if err == nil || len(err.Error()) > 2000 {
		t.Errorf("a 10 MB value cell gives a message of %d bytes", len(err.Error()))
	}
	// "kind,..." in UTF-16 little endian with its byte order mark.
	u16 := []byte{0xFF, 0xFE, 'k', 0, 'i', 0, 'n', 0, 'd', 0}
	_, err = ReadCSV(bytes.NewReader(u16))
	if err == nil || !strings.Contains(err.Error(), "UTF-16") || !strings.Contains(err.Error(), "UTF-8") {
		t.Errorf("UTF-16: %v", err)
	}
	_, err = ReadCSV(bytes.NewReader(u16[2:]))
	if err == nil || !strings.Contains(err.Error(), "UTF-16") {
		t.Errorf("UTF-16 without a mark: %v", err)
	}
}
