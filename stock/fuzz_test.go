package stock

import (
	"bytes"
	"errors"
	"math"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"drawerfit/fault"
)

// FuzzParseValue checks that the value parser never panics, that every
// refusal is a fault.Invalid error quoting the text, and that every value
// it accepts is in range and reads back exactly from its written form.
// Run with: go test ./stock -fuzz FuzzParseValue
func FuzzParseValue(f *testing.F) {
	for _, s := range []string{"4K7", "R47", "1M0", "2n2", "4u7", "p68", "47K3", "4.7 kΩ", "4.7kohm",
		"47nF", "0.047uF", "0.047µF", "47000p", "4700", "4k7k", "1.2.3", "103", "0.1", "-1", "NaN",
		"1e3", "1e-9", "4.7e-9", "1M", "10f", "Ω", "", " ", "R", "..", "1e", "9e999", "4 k7", "1\u2126"} {
		f.Add(s, false)
		f.Add(s, true)
	}
	f.Fuzz(func(t *testing.T, s string, capacitor bool) {
		k := Resistor
		if capacitor {
			k = Capacitor
		}
		v, err := ParseValue(s, k)
		if err != nil {
			if !fault.Is(err, fault.Invalid) {
				t.Fatalf("ParseValue(%q): error of kind %v: %v", s, fault.KindOf(err), err)
			}
			if !strings.Contains(err.Error(), strconv.Quote(s)) {
				t.Fatalf("ParseValue(%q): error does not quote the text: %v", s, err)
			}
			return
		}
		lo, hi := MinResistance, MaxResistance
		if k == Capacitor {
			lo, hi = MinCapacitance, MaxCapacitance
		}
		if math.IsNaN(v) || v < lo || v > hi {
			t.Fatalf("ParseValue(%q) = %v, outside [%v, %v]", s, v, lo, hi)
		}
		text := compactValue(v, k)
		back, err := ParseValue(text, k)
		if err != nil || back != v {
			t.Fatalf("ParseValue(%q) = %v, written %q, read back %v, %v", s, v, text, back, err)
		}
		if shown := FormatValue(v, k); !strings.HasSuffix(shown, k.Unit()) {
			t.Fatalf("FormatValue(%v) = %q", v, shown)
		}
	})
}

// FuzzReadCSV checks that the CSV reader never panics, that every refusal
// is a fault.Invalid *CSVError whose problems each have a line and a
// reason, and that every file it accepts survives WriteCSV and ReadCSV
// unchanged. Run with: go test ./stock -fuzz FuzzReadCSV
func FuzzReadCSV(f *testing.F) {
	for _, s := range []string{
		"kind,value,quantity\nR,4k7,10\n",
		"\ufeffkind,value,tolerance,quantity,package,dielectric,location,note\r\nC,2n2,5%,20,0805,C0G,B3,\"a, b\"\r\n",
		"kind,value,quantity,note\nR,1k,1,'=SUM(A1)\n",
		"kind,value,quantity,note\nR,1k,1,\"two\nlines\"\n",
		"kind,value,quantity\nR,4k7k,10\nC,103,-1\n",
		"kind,value,quantity,colour\n",
		"kind,value\n",
		"",
		"\"",
		"kind,value,quantity\nR,\"4\"7,1\n",
		",,,\n",
		"KIND , Value,QUANTITY\nr,1M0,0\n",
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		items, err := ReadCSV(strings.NewReader(s))
		if err != nil {
			if items != nil {
				t.Fatalf("items and an error: %v", err)
			}
			var ce *CSVError
			if !fault.Is(err, fault.Invalid) || !errors.As(err, &ce) || len(ce.Problems) == 0 {
				t.Fatalf("error is not an invalid-input CSVError with problems: %#v", err)
			}
			for _, p := range ce.Problems {
				if p.Line < 1 || strings.TrimSpace(p.Reason) == "" {
					t.Fatalf("problem without line or reason: %+v", p)
				}
			}
			return
		}
		for i := range items {
			// What ReadCSV returns is what a store keeps: normalised and valid.
			if p := items[i].Problems(); p != nil {
				t.Fatalf("item %d accepted with problems %v", i, p)
			}
			if items[i].Normalize() != items[i] {
				t.Fatalf("item %d not normalised: %+v", i, items[i])
			}
		}
		var buf bytes.Buffer
		if err := WriteCSV(&buf, items); err != nil {
			t.Fatalf("WriteCSV: %v", err)
		}
		back, err := ReadCSV(&buf)
		if err != nil {
			t.Fatalf("re-reading the export: %v\n%s", err, buf.String())
		}
		if len(items) == 0 && len(back) == 0 {
			return
		}
		if !reflect.DeepEqual(back, items) {
			t.Fatalf("round trip:\n got %+v\nwant %+v", back, items)
		}
	})
}
