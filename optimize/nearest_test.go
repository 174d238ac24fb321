package optimize

import (
	"math"
	"testing"

	"drawerfit/stock"
	"drawerfit/synth"
)

func TestNearestTake(t *testing.T) {
	t.Parallel()
	// Invented rows.
	items := []stock.Item{
		{ID: 1, Kind: stock.Resistor, Value: 10e3, Quantity: 10},
		{ID: 2, Kind: stock.Resistor, Value: 22e3, Quantity: 2},
		{ID: 3, Kind: stock.Resistor, Value: 4.7e3, Quantity: 10},
		{ID: 4, Kind: stock.Capacitor, Value: 10e-9, Quantity: 10},
	}
	o := DefaultOptions()
	t.Run("single-exact", func(t *testing.T) {
		c, ok := NewNearest(items, o, nil).Take(10e3)
		if !ok || c.Value != 10e3 || len(c.Parts) != 1 {
			t.Fatalf("got %+v", c)
		}
	})
	t.Run("pair-closer", func(t *testing.T) {
		// 14.7 kΩ = 10 kΩ + 4.7 kΩ exactly.
		c, ok := NewNearest(items, o, nil).Take(14.7e3)
		if !ok || math.Abs(c.Value-14.7e3) > 1e-9 || c.Arrangement != synth.Series {
			t.Fatalf("got %+v", c)
		}
	})
	t.Run("singles-only", func(t *testing.T) {
		o1 := o
		o1.Combine = 1
		c, _ := NewNearest(items, o1, nil).Take(14.7e3)
		if len(c.Parts) != 1 || c.Value != 10e3 {
			t.Fatalf("got %+v", c)
		}
	})
	t.Run("reserved-and-boards", func(t *testing.T) {
		o2 := o
		o2.Boards = 2
		n := NewNearest(items, o2, map[int64]int{1: 10}) // every 10 kΩ is taken
		c, ok := n.Take(22e3)
		if !ok || c.Value != 22e3 {
			t.Fatalf("first take: %+v", c)
		}
		// The two 22 kΩ parts are now reserved for the two boards.
		c, _ = n.Take(22e3)
		for _, p := range c.Parts {
			if p.StockID == 2 || p.StockID == 1 {
				t.Fatalf("reused an exhausted row: %+v", c)
			}
		}
	})
}
