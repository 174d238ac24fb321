package stock

import (
	"strconv"

	"drawerfit/fault"
)

// Attrs is a change of a row's shop attributes: each field that is not nil
// is set (the zero value clears it: voltage 0, an unknown price, min 0,
// pack 0, an empty supplier-ref).
type Attrs struct {
	Voltage     *float64
	Price       *Money
	Min         *int
	Pack        *int
	SupplierRef *string
}

// Empty reports whether a changes nothing.
func (a Attrs) Empty() bool {
	return a.Voltage == nil && a.Price == nil && a.Min == nil && a.Pack == nil && a.SupplierRef == nil
}

// Apply returns it with the attributes of a set.
func (a Attrs) Apply(it Item) Item {
	if a.Voltage != nil {
		it.Voltage = *a.Voltage
	}
	if a.Price != nil {
		it.Price = *a.Price
	}
	if a.Min != nil {
		it.Min = *a.Min
	}
	if a.Pack != nil {
		it.Pack = *a.Pack
	}
	if a.SupplierRef != nil {
		it.SupplierRef = *a.SupplierRef
	}
	return it
}

// FillAttrs returns row with every shop attribute it lacks (voltage,
// price, min, pack, supplier-ref) taken from in, as a merge of in into row
// does: an attribute row already has is kept. Two different voltage
// ratings are different parts, so a row and an item rated differently are
// a fault.Conflict: they must not be merged into one row.
func FillAttrs(row, in Item) (Item, error) {
	if row.Voltage != 0 && in.Voltage != 0 && row.Voltage != in.Voltage {
		return row, fault.Conflictf("%s is rated %s, the new parts %s: parts of different ratings need rows of their own (give them another location)",
			row.Label(), FormatVoltage(row.Voltage), FormatVoltage(in.Voltage))
	}
	if row.Voltage == 0 {
		row.Voltage = in.Voltage
	}
	if !row.Price.Known() {
		row.Price = in.Price
	}
	if row.Min == 0 {
		row.Min = in.Min
	}
	if row.Pack == 0 {
		row.Pack = in.Pack
	}
	if row.SupplierRef == "" {
		row.SupplierRef = in.SupplierRef
	}
	return row, nil
}

// SameAttrs reports whether two items have the same shop attributes.
func SameAttrs(a, b Item) bool {
	return a.Voltage == b.Voltage && a.Price == b.Price && a.Min == b.Min && a.Pack == b.Pack && a.SupplierRef == b.SupplierRef
}

// AttrChanges describes, one phrase per attribute, how the shop attributes
// changed from old to new: "price 0.010 -> 0.012", "min none -> 50". The
// store writes them to the ledger as notes (entries that change no
// quantity), so that stock history shows when a price or minimum changed.
func AttrChanges(old, new Item) []string {
	var out []string
	add := func(name, a, b string) {
		if a == "" {
			a = "none"
		}
		if b == "" {
			b = "none"
		}
		if a != b {
			out = append(out, name+" "+a+" -> "+b)
		}
	}
	count := func(n int) string {
		if n == 0 {
			return ""
		}
		return strconv.Itoa(n)
	}
	add("voltage", FormatVoltage(old.Voltage), FormatVoltage(new.Voltage))
	add("price", old.Price.String(), new.Price.String())
	add("min", count(old.Min), count(new.Min))
	add("pack", count(old.Pack), count(new.Pack))
	quote := func(s string) string {
		if s == "" {
			return ""
		}
		return strconv.Quote(s)
	}
	add("supplier-ref", quote(old.SupplierRef), quote(new.SupplierRef))
	return out
}
