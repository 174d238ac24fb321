package cli

import (
	"encoding/json"
	"fmt"
	"strconv"
	"strings"
	"testing"
)

// TestImportUnknownColumns: refused by default with their names; imported
// without them on request, and the summary says what was ignored.
func TestImportUnknownColumns(t *testing.T) {
	t.Parallel()
	s := newStockEnv(t)
	file := s.write("order.csv", "kind,value,quantity,mpn,supplier\nR,4k7,10,XR-47,north\nR,10k,5,XR-10,north\n")
	_, errs, code := s.run("", "stock", "import", file)
	if code != 2 || !strings.Contains(errs, `unknown columns "mpn", "supplier"`) || !strings.Contains(errs, "--ignore-columns") ||
		!strings.Contains(errs, "nothing was imported") {
		t.Fatalf("strict import: exit %d, %q", code, errs)
	}
	out, errs, code := s.run("", "stock", "import", file, "--ignore-columns=mpn")
	if code != 2 || !strings.Contains(errs, `"supplier"`) || strings.Contains(errs, `"mpn"`) {
		t.Fatalf("one named: exit %d, %q %q", code, out, errs)
	}
	out = s.ok("stock", "import", file, "--ignore-columns")
	if !strings.Contains(out, "ignored columns: mpn, supplier") || !strings.Contains(out, "2 new stock rows") {
		t.Errorf("summary:\n%s", out)
	}
	if items := s.listJSON(); len(items) != 2 {
		t.Errorf("rows: %v", items)
	}
}

// TestImportReplaceWithNoRows: a header-only file (a truncated export)
// does not empty the stock unless asked to.
func TestImportReplaceWithNoRows(t *testing.T) {
	t.Parallel()
	s := newStockEnv(t)
	s.ok("stock", "import", s.write("drawer.csv", backupCSV))
	empty := s.write("truncated.csv", "kind,value,quantity\n")
	_, errs, code := s.run("", "stock", "import", empty, "--replace")
	if code != 2 || !strings.Contains(errs, "has no rows") || !strings.Contains(errs, "--allow-empty") {
		t.Fatalf("exit %d, %q", code, errs)
	}
	if items := s.listJSON(); len(items) != 2 {
		t.Fatalf("the stock changed: %v", items)
	}
	s.ok("stock", "import", empty, "--replace", "--allow-empty")
	if items := s.listJSON(); len(items) != 0 {
		t.Fatalf("--allow-empty kept %v", items)
	}
}

// TestStockSetReportsWhatItWrote: under concurrent sets of one row, each
// "A -> B" message is a change in the ledger (the row is read inside the
// writing transaction; it was read before it, and messages disagreed).
func TestStockSetReportsWhatItWrote(t *testing.T) {
	if testing.Short() {
		t.Skip("240 commands")
	}
	s := newStockEnv(t)
	s.ok("stock", "import", s.write("drawer.csv", backupCSV))
	msgs := make(chan string, 240)
	done := make(chan bool)
	for g := 0; g < 2; g++ {
		go func(g int) {
			for i := 0; i < 120; i++ {
				out, errs, code := s.run("", "stock", "set", "1", "--qty", strconv.Itoa(1+(i*7+g*13)%50), "--reason", "count")
				if code != 0 {
					msgs <- "error: " + errs
					continue
				}
				msgs <- strings.TrimSpace(out)
			}
			done <- true
		}(g)
	}
	<-done
	<-done
	close(msgs)
	var hist []map[string]any
	if err := json.Unmarshal([]byte(s.ok("stock", "history", "1", "--json")), &hist); err != nil {
		t.Fatal(err)
	}
	written := map[string]bool{}
	for _, m := range hist {
		b, d := int(m["balance"].(float64)), int(m["delta"].(float64))
		written[fmt.Sprintf("%d -> %d", b-d, b)] = true
	}
	for m := range msgs {
		if strings.HasPrefix(m, "error") {
			t.Error(m)
			continue
		}
		if strings.Contains(m, "already") {
			continue
		}
		_, change, _ := strings.Cut(m, ": ")
		change, _, _ = strings.Cut(change, " (")
		if !written[change] {
			t.Errorf("message %q is no change in the ledger", m)
		}
	}
}
