package cli

import (
	"encoding/json"
	"strings"
	"testing"

	"drawerfit/stock"
)

// TestFitMinVoltageAndCostJSON fits against the sample drawer with a
// working voltage and checks, from the stock file itself, that no
// capacitor rated below it is used and that cost_per_board is the sum of
// the parts' prices (null exactly when one has none).
func TestFitMinVoltageAndCostJSON(t *testing.T) {
	t.Parallel()
	s := newStockEnv(t)
	s.ok("stock", "import", sampleCSV)
	items := s.listJSON()
	rows := map[int64]map[string]any{}
	for _, it := range items {
		rows[int64(it["stock_id"].(float64))] = it
	}
	for _, args := range [][]string{
		{"--min-voltage", "60V"},
		{"--min-voltage", "60", "--require-rating", "--rank", "cost"},
	} {
		cmd := append([]string{"fit", "lowpass", "--pass", "2k", "--order", "4", "--top", "5", "--json", "--show-failing"}, args...)
		out, _, _ := s.run("", cmd...)
		var doc struct {
			Candidates []struct {
				Cost   *string `json:"cost_per_board"`
				OpAmps []struct {
					StockID  int64 `json:"stock_id"`
					Packages int   `json:"packages_per_board"`
				} `json:"opamps"`
				Sections []struct {
					Components []struct {
						Parts []struct {
							StockID int64 `json:"stock_id"`
						} `json:"parts"`
					} `json:"components"`
				} `json:"sections"`
			} `json:"candidates"`
			Notes []string `json:"notes"`
		}
		if err := json.Unmarshal([]byte(out), &doc); err != nil {
			t.Fatalf("%v: %v\n%s", args, err, out)
		}
		if len(doc.Candidates) == 0 {
			t.Fatalf("%v: no candidates\n%s", args, out)
		}
		require := len(args) > 2
		var prev stock.Money
		for ci, c := range doc.Candidates {
			var tally stock.Tally
			for _, sec := range c.Sections {
				for _, comp := range sec.Components {
					for _, p := range comp.Parts {
						row := rows[p.StockID]
						price := stock.Money{}
						if ps, ok := row["price"].(string); ok {
							price, _ = stock.ParsePrice(ps)
						}
						tally.Add(price, 1)
						if row["kind"] != "capacitor" {
							continue
						}
						v, rated := row["voltage"].(float64)
						if rated && v < 60 {
							t.Fatalf("%v: row %d rated %v V used below 60 V", args, p.StockID, v)
						}
						if !rated && require {
							t.Fatalf("%v: unrated row %d used although a rating is required", args, p.StockID)
						}
					}
				}
			}
			// The amplifier packages are parts of the board too.
			for _, a := range c.OpAmps {
				if a.StockID == 0 {
					continue
				}
				price := stock.Money{}
				if ps, ok := rows[a.StockID]["price"].(string); ok {
					price, _ = stock.ParsePrice(ps)
				}
				tally.Add(price, a.Packages)
			}
			want := tally.Total()
			got := stock.Money{}
			if c.Cost != nil {
				got, _ = stock.ParsePrice(*c.Cost)
			}
			if got != want {
				t.Errorf("%v: candidate %d cost_per_board %v, parts sum %q", args, ci+1, c.Cost, want)
			}
			if require && ci > 0 && prev.Cmp(got) > 0 {
				t.Errorf("--rank cost: candidate %d (%s) after a dearer one (%s)", ci+1, got, prev)
			}
			prev = got
		}
	}
	if _, errOut, code := s.run("", "fit", "lowpass", "--pass", "2k", "--order", "4", "--stock", sampleCSV, "--min-voltage", "high"); code != 2 || !strings.Contains(errOut, `voltage "high"`) {
		t.Errorf("--min-voltage high: exit %d, %q", code, errOut)
	}
	if _, errOut, code := s.run("", "fit", "lowpass", "--pass", "2k", "--order", "4", "--stock", sampleCSV, "--require-rating"); code != 2 || !strings.Contains(errOut, "--min-voltage") {
		t.Errorf("--require-rating alone: exit %d, %q", code, errOut)
	}
}
