package production

import (
	"bytes"
	"encoding/csv"
	"testing"

	"drawerfit/stock"
)

func TestBOMLinesAndCSV(t *testing.T) {
	t.Parallel()
	b := &Batch{Boards: 10, Picks: []Pick{
		{StockID: 7, Part: stock.Item{Kind: stock.Capacitor, Value: 2.2e-9}, Quantity: 20, Refs: []string{"C1", "C2"}},
		{StockID: 3, Part: stock.Item{Kind: stock.Resistor, Value: 4700}, Quantity: 10, Refs: []string{"R1"}},
		{StockID: 9, Part: stock.Item{Kind: stock.Resistor, Value: 1000}, Quantity: 10, Refs: []string{"R2"}}, // gone from stock
	}}
	rows := map[int64]stock.Item{
		7: {ID: 7, Kind: stock.Capacitor, Value: 2.2e-9, Tolerance: 0.05, Dielectric: "C0G", Voltage: 50, Location: "=C2",
			SupplierRef: "+strip 2n2", Price: stock.MoneyFromMicros(85_000)},
		3: {ID: 3, Kind: stock.Resistor, Value: 4700, Tolerance: 0.01, Package: "0805", Location: "A3", Price: stock.MoneyFromMicros(12_000)},
	}
	lines := b.BOM(rows)
	if len(lines) != 3 || lines[0].StockID != 9 || lines[1].StockID != 3 || lines[2].StockID != 7 {
		t.Fatalf("order by kind and value: %+v", lines)
	}
	if l := lines[2]; l.PerBoard != 2 || l.Batch != 20 || l.Extended.String() != "1.70" || !l.Current {
		t.Errorf("capacitor line %+v", l)
	}
	if l := lines[0]; l.Current || l.Extended.Known() {
		t.Errorf("a row gone from stock keeps the saved part, without a price: %+v", l)
	}
	if p, n := BOMTotal(lines); p.String() != "1.82" || n != 1 {
		t.Errorf("total %s, %d unpriced", p, n)
	}
	var buf bytes.Buffer
	if err := WriteBOMCSV(&buf, lines); err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(&buf).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	c := recs[3]
	want := []string{"7", "C1 C2", "2", "20", "2.2 nF", "capacitor", "5%", "", "C0G", "50 V", "'=C2", "'+strip 2n2", "0.085", "1.70"}
	for i := range want {
		if c[i] != want[i] {
			t.Errorf("column %s = %q, want %q", BOMColumns[i], c[i], want[i])
		}
	}
}
