package store

import (
	"bytes"
	"context"
	"reflect"
	"strings"
	"testing"

	"drawerfit/fault"
	"drawerfit/stock"
)

// TestShopAttributesRoundTrip stores rows with every shop attribute, exports
// them as CSV, imports the file into a fresh database and checks that every
// column comes back identical.
func TestShopAttributesRoundTrip(t *testing.T) { eachDialect(t, testShopAttributesRoundTrip) }

func testShopAttributesRoundTrip(t *testing.T, open opener) {
	t.Parallel()
	ctx := context.Background()
	in := "kind,value,quantity,tolerance,dielectric,location,voltage,price,min,pack,supplier-ref\n" +
		"R,4k7,50,1%,,A1,,0.012,40,100,bag R-4K7\n" +
		"C,2n2,20,5%,C0G,C1,50V,0.085,,,\n" +
		"C,100n,10,10%,PET,C5,63,0.30,5,,=cmd\n" + // formula-looking ref is guarded on export
		"C,10n,10,5%,PP,C4,1kV,,,,\n" // no price: unknown, not zero
	items, err := stock.ReadCSV(strings.NewReader(in))
	if err != nil {
		t.Fatal(err)
	}
	a := open(t)
	if _, err := a.Import(ctx, items, false); err != nil {
		t.Fatal(err)
	}
	first, _ := a.List(ctx, stock.Filter{})
	var buf bytes.Buffer
	if err := stock.WriteCSV(&buf, first); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(buf.String(), ",'=cmd,,,,,\n") {
		t.Errorf("supplier-ref not guarded:\n%s", buf.String())
	}
	back, err := stock.ReadCSV(bytes.NewReader(buf.Bytes()))
	if err != nil {
		t.Fatal(err)
	}
	b := open(t)
	if _, err := b.Import(ctx, back, false); err != nil {
		t.Fatal(err)
	}
	second, _ := b.List(ctx, stock.Filter{})
	noIDs := func(its []stock.Item) []stock.Item {
		out := append([]stock.Item(nil), its...)
		for i := range out {
			out[i].ID = 0
		}
		return out
	}
	if !reflect.DeepEqual(noIDs(first), noIDs(second)) {
		t.Fatalf("round trip:\n got %+v\nwant %+v", second, first)
	}
	if p := first[0].Price; p.String() != "0.012" || first[0].Min != 40 || first[0].Pack != 100 {
		t.Errorf("resistor row %+v", first[0])
	}
	for _, it := range first {
		if it.Value == 10e-9 && it.Price.Known() {
			t.Errorf("an empty price became known: %+v", it)
		}
	}
}

func TestSetAttrsWritesLedgerNotes(t *testing.T) { eachDialect(t, testSetAttrsWritesLedgerNotes) }

func testSetAttrsWritesLedgerNotes(t *testing.T, open opener) {
	t.Parallel()
	ctx := context.Background()
	db := open(t)
	r, _, err := db.Add(ctx, res(t, "10k", 30, "A2"), "")
	if err != nil {
		t.Fatal(err)
	}
	p, _ := stock.ParsePrice("0.012")
	min := 50
	got, err := db.SetAttrs(ctx, r.ID, stock.Attrs{Price: &p, Min: &min}, "new price list")
	if err != nil {
		t.Fatal(err)
	}
	if got.Price != p || got.Min != 50 || got.Quantity != 30 {
		t.Fatalf("after set: %+v", got)
	}
	// Setting the same values again writes nothing.
	if _, err := db.SetAttrs(ctx, r.ID, stock.Attrs{Price: &p}, ""); err != nil {
		t.Fatal(err)
	}
	h, _ := db.History(ctx, r.ID)
	if len(h) != 2 {
		t.Fatalf("history %+v", h)
	}
	note := h[1]
	if note.Delta != 0 || note.Balance != 30 || note.Reason != "price none -> 0.012; min none -> 50 (new price list)" {
		t.Errorf("ledger note %+v", note)
	}
	bad := -5
	if _, err := db.SetAttrs(ctx, r.ID, stock.Attrs{Min: &bad}, ""); !fault.Is(err, fault.Invalid) {
		t.Errorf("min -5 accepted: %v", err)
	}
}

func TestMergeFillsAttributesAndRefusesOtherRatings(t *testing.T) {
	eachDialect(t, testMergeFillsAttributesAndRefusesOtherRatings)
}

func testMergeFillsAttributesAndRefusesOtherRatings(t *testing.T, open opener) {
	t.Parallel()
	ctx := context.Background()
	db := open(t)
	c := capa(t, "10n", 10, "C0G", "C1")
	c.Voltage = 50
	row, _, err := db.Add(ctx, c, "")
	if err != nil {
		t.Fatal(err)
	}
	more := capa(t, "10n", 5, "C0G", "C1")
	more.Price, _ = stock.ParsePrice("0.05")
	more.Voltage = 50
	got, merged, err := db.Add(ctx, more, "")
	if err != nil || !merged || got.Price.String() != "0.05" || got.Quantity != 15 {
		t.Fatalf("merge: %+v %v %v", got, merged, err)
	}
	// A price already there is kept by a merge; stock set or a replacing
	// import changes it.
	more.Price, _ = stock.ParsePrice("0.07")
	if got, _, _ = db.Add(ctx, more, ""); got.Price.String() != "0.05" {
		t.Errorf("merge changed a known price: %+v", got)
	}
	other := capa(t, "10n", 5, "C0G", "C1")
	other.Voltage = 16
	if _, _, err := db.Add(ctx, other, ""); !fault.Is(err, fault.Conflict) {
		t.Fatalf("a 16 V part merged into a 50 V row: %v", err)
	}
	if it, _ := db.Get(ctx, row.ID); it.Quantity != 20 || it.Voltage != 50 {
		t.Errorf("row after refused merge: %+v", it)
	}
	// A replacing import takes the file's attributes, with a ledger note.
	repl := capa(t, "10n", 20, "C0G", "C1")
	repl.Voltage = 100
	if _, err := db.Import(ctx, []stock.Item{repl}, true); err != nil {
		t.Fatal(err)
	}
	it, _ := db.Get(ctx, row.ID)
	if it.Voltage != 100 || it.Price.Known() {
		t.Errorf("after replace: %+v", it)
	}
	h, _ := db.History(ctx, row.ID)
	if last := h[len(h)-1]; !strings.Contains(last.Reason, "voltage 50 V -> 100 V") || !strings.Contains(last.Reason, "price 0.05 -> none") {
		t.Errorf("replace note %+v", last)
	}
}
