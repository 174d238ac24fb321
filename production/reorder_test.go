package production

import (
	"testing"

	"drawerfit/stock"
)

func TestReorderRoundsUpToPacks(t *testing.T) {
	t.Parallel()
	price := stock.MoneyFromMicros(12_000) // 0.012 (invented)
	items := []stock.Item{
		{ID: 1, Quantity: 30, Min: 50, Pack: 100, Price: price, Location: "B"}, // 20 short of min -> one pack
		{ID: 2, Quantity: 60, Min: 50, Location: "A"},                          // fine now; the batch takes 25 -> 15 to buy
		{ID: 3, Quantity: 10, Location: "A"},                                   // no minimum; the batch takes 14 -> 4 short
		{ID: 4, Quantity: 5, Min: 5},                                           // at its minimum: not listed
		{ID: 5, Quantity: 0, Min: 1, Pack: 1},                                  // pack 1 changes nothing
	}
	now := Reorder(items, nil)
	if len(now) != 2 || now[0].Row.ID != 5 || now[1].Row.ID != 1 {
		t.Fatalf("stock as it is: %+v", now)
	}
	if now[1].ToBuy != 100 || now[1].Cost.String() != "1.20" || now[0].ToBuy != 1 || now[0].Cost.Known() {
		t.Errorf("lines %+v", now)
	}
	batch := Reorder(items, map[int64]int{2: 25, 3: 14, 99: 3})
	want := map[int64][2]int{1: {30, 100}, 2: {35, 15}, 3: {-4, 4}, 5: {0, 1}}
	if len(batch) != len(want) {
		t.Fatalf("after the batch: %+v", batch)
	}
	for _, l := range batch {
		w, ok := want[l.Row.ID]
		if !ok || l.After != w[0] || l.ToBuy != w[1] || l.Needed != l.Row.Quantity-l.After {
			t.Errorf("row %d: after %d to buy %d, want %v", l.Row.ID, l.After, l.ToBuy, w)
		}
	}
	if p, n := ReorderCost(batch); p.String() != "1.20" || n != 3 {
		t.Errorf("cost %s with %d unpriced", p, n)
	}
}

func TestSuggestionCost(t *testing.T) {
	t.Parallel()
	top := stock.Item{ID: 4, Quantity: 30, Price: stock.MoneyFromMicros(65_000)} // 30 × 0.065 = 1.95
	fresh := stock.Item{Quantity: 10, Price: stock.MoneyFromMicros(12_000)}      // a new row: estimated price
	if c, est := (Suggestion{Items: []stock.Item{top}}).Cost(); c.String() != "1.95" || est {
		t.Errorf("top-up: %s estimated %v", c, est)
	}
	if c, est := (Suggestion{Items: []stock.Item{top, fresh}}).Cost(); c.String() != "2.07" || !est {
		t.Errorf("with a new row: %s estimated %v", c, est)
	}
	if c, _ := (Suggestion{Items: []stock.Item{top, {ID: 9, Quantity: 1}}}).Cost(); c.Known() {
		t.Errorf("a row without a price must make the total unknown, got %s", c)
	}
}
