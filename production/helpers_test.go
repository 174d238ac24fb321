package production

import (
	"os"
	"testing"
	"time"

	"drawerfit/stock"
	"drawerfit/synth"
)

// sampleStock reads the bundled demonstration drawer (invented data) with
// ids 1..n in file order.
func sampleStock(tb testing.TB) []stock.Item {
	tb.Helper()
	f, err := os.Open("../sample-stock.csv")
	if err != nil {
		tb.Fatal(err)
	}
	defer f.Close()
	items, err := stock.ReadCSV(f)
	if err != nil {
		tb.Fatal(err)
	}
	for i := range items {
		items[i].ID = int64(i + 1)
	}
	return items
}

// mixingDeskPlan is an invented board: a small mixing desk's channel
// strip with a stereo anti-alias pair, a rumble high-pass and a
// presence low-pass (orders up to 6).
func mixingDeskPlan(boards int) Plan {
	return Plan{Name: "channel strip", Boards: boards, Filters: []PlanFilter{
		{Label: "left anti-alias", Spec: synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 15e3, Order: 6}},
		{Label: "right anti-alias", Spec: synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 15e3, Order: 6}},
		{Label: "rumble high-pass", Spec: synth.Spec{Kind: synth.HighPass, Approx: synth.Bessel, Pass: 20, Order: 4}},
		{Label: "presence low-pass", Spec: synth.Spec{Kind: synth.LowPass, Approx: synth.Chebyshev, Pass: 5e3, Ripple: 0.5, Order: 6}},
	}}
}

func nowSeconds() float64 { return float64(time.Now().UnixNano()) / 1e9 }
