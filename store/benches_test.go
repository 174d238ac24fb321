package store

// Several benches at once, as real processes, on both dialects: builds
// racing for too little stock, adjustments of one row, and (PostgreSQL; the
// SQLite case is TestKilledImportLeavesDatabaseUnchanged) a process killed
// in the middle of a large import.

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

	"drawerfit/production"
	"drawerfit/stock"
)

// targets name a new, empty database for each dialect: a file path, or a
// database on the test server (skipped without one).
var targets = []struct {
	name string
	make func(t *testing.T) string
}{
	{"sqlite", func(t *testing.T) string { return filepath.Join(t.TempDir(), "stock.db") }},
	{"postgres", newPostgresDatabase},
}

// TestBenchesRaceBuilds: 8 processes build 10 boards each of one design at
// the same moment on stock for 35 boards: exactly 3 builds succeed, the
// others are refused, no row goes below zero, and every build's ledger
// entries are its own (its reason, its rows, its quantities).
func TestBenchesRaceBuilds(t *testing.T) {
	if testing.Short() {
		t.Skip("starts 8 subprocesses per dialect")
	}
	for _, tg := range targets {
		t.Run(tg.name, func(t *testing.T) {
			ctx := context.Background()
			path := tg.make(t)
			db, err := Open(path)
			if err != nil {
				t.Fatal(err)
			}
			d := fixtureDesign(t, db, 1)
			for _, u := range d.StockUse() {
				if _, err := db.SetQuantity(ctx, u.StockID, 35*u.PerBoard, "count"); err != nil {
					t.Fatal(err)
				}
			}
			if err := db.SaveDesigns(ctx, []*production.Design{d}); err != nil {
				t.Fatal(err)
			}
			before := quantities(t, db)
			db.Close()

			const benches, boards = 8, 10
			var cmds []*exec.Cmd
			var gates []io.WriteCloser
			for i := 0; i < benches; i++ {
				cmd := exec.Command(os.Args[0], "-test.run=^TestBuildHelperProcess$", "-test.v=false")
				cmd.Env = append(os.Environ(), buildHelperEnv+"=1", "DRAWERFIT_BUILD_DB="+path,
					"DRAWERFIT_BUILD_DESIGN="+d.ID, "DRAWERFIT_BUILD_BOARDS="+strconv.Itoa(boards))
				cmd.Stdout, cmd.Stderr = io.Discard, os.Stderr
				in, _ := cmd.StdinPipe()
				if err := cmd.Start(); err != nil {
					t.Fatal(err)
				}
				cmds, gates = append(cmds, cmd), append(gates, in)
			}
			for _, g := range gates {
				g.Close()
			}
			codes := map[int]int{}
			for _, cmd := range cmds {
				err := cmd.Wait()
				var ee *exec.ExitError
				switch {
				case errors.As(err, &ee):
					codes[ee.ExitCode()]++
				case err != nil:
					t.Fatal(err)
				default:
					codes[0]++
				}
			}
			if codes[0] != 3 || codes[6] != benches-3 {
				t.Fatalf("exit codes %v: want 3 builds and %d refusals", codes, benches-3)
			}
			db, err = Open(path)
			if err != nil {
				t.Fatal(err)
			}
			defer db.Close()
			after := quantities(t, db)
			for _, u := range d.StockUse() {
				if want := before[u.StockID] - 3*boards*u.PerBoard; after[u.StockID] != want {
					t.Errorf("row %d: %d after, want %d", u.StockID, after[u.StockID], want)
				}
			}
			bs, err := db.Builds(ctx)
			if err != nil || len(bs) != 3 {
				t.Fatalf("%d builds recorded (%v), want 3", len(bs), err)
			}
			linked := map[int64]bool{}
			for _, b := range bs {
				reason := production.BuildReason(b.ID, d.ID, boards)
				if len(b.Moves) != len(d.StockUse()) {
					t.Errorf("build %d has %d ledger entries, the design uses %d rows", b.ID, len(b.Moves), len(d.StockUse()))
				}
				for _, m := range b.Moves {
					if m.Reason != reason || m.Delta != -boards*perBoard(d, m.StockID) {
						t.Errorf("build %d holds entry %d (%q, %+d on row %d), not its own", b.ID, m.ID, m.Reason, m.Delta, m.StockID)
					}
					linked[m.ID] = true
				}
			}
			h, _ := db.History(ctx, 0)
			for _, m := range h {
				if m.Balance < 0 {
					t.Fatalf("ledger entry %d has balance %d", m.ID, m.Balance)
				}
				if strings.HasPrefix(m.Reason, "build ") && !linked[m.ID] {
					t.Errorf("ledger entry %d (%s) belongs to no build", m.ID, m.Reason)
				}
			}
		})
	}
}

func perBoard(d *production.Design, stockID int64) int {
	for _, u := range d.StockUse() {
		if u.StockID == stockID {
			return u.PerBoard
		}
	}
	return 0
}

// TestBenchesLoseNoUpdate: 4 processes adjust one row 200 times each at
// once; every change arrives and the ledger's balances form one unbroken
// chain.
func TestBenchesLoseNoUpdate(t *testing.T) {
	if testing.Short() {
		t.Skip("starts 4 subprocesses per dialect")
	}
	for _, tg := range targets {
		t.Run(tg.name, func(t *testing.T) {
			ctx := context.Background()
			path := tg.make(t)
			db, err := Open(path)
			if err != nil {
				t.Fatal(err)
			}
			row, _, err := db.Add(ctx, res(t, "10k", 100, "A2"), "start")
			if err != nil {
				t.Fatal(err)
			}
			db.Close()
			const procs, each = 4, 200
			var cmds []*exec.Cmd
			var gates []io.WriteCloser
			for i := 0; i < procs; i++ {
				cmd := helper(t, "adjust", path, strconv.FormatInt(row.ID, 10), strconv.Itoa(each))
				in, _ := cmd.StdinPipe()
				if err := cmd.Start(); err != nil {
					t.Fatal(err)
				}
				cmds, gates = append(cmds, cmd), append(gates, in)
			}
			for _, g := range gates {
				g.Close()
			}
			for i, cmd := range cmds {
				if err := cmd.Wait(); err != nil {
					t.Fatalf("process %d: %v", i, err)
				}
			}
			db, err = Open(path)
			if err != nil {
				t.Fatal(err)
			}
			defer db.Close()
			got, _ := db.Get(ctx, row.ID)
			// Per process: 200 changes, 160 of +2 and 40 of -1, net +280.
			if want := 100 + procs*(160*2-40); got.Quantity != want {
				t.Fatalf("quantity %d, want %d: updates were lost", got.Quantity, want)
			}
			h, _ := db.History(ctx, row.ID)
			if len(h) != 1+procs*each {
				t.Fatalf("%d ledger entries, want %d", len(h), 1+procs*each)
			}
			for i := 1; i < len(h); i++ {
				if h[i].Balance != h[i-1].Balance+h[i].Delta {
					t.Fatalf("ledger chain broken at entry %d: %d + %d != %d", i, h[i-1].Balance, h[i].Delta, h[i].Balance)
				}
			}
		})
	}
}

// TestServerKilledImportLeavesNothing: a process killed (SIGKILL) while it
// writes a large replacing import to the server leaves nothing of it.
func TestServerKilledImportLeavesNothing(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a subprocess and writes a large transaction")
	}
	url := newPostgresDatabase(t)
	ctx := context.Background()
	db, err := Open(url)
	if err != nil {
		t.Fatal(err)
	}
	for i, v := range []string{"1k", "2k2", "4k7"} {
		if _, _, err := db.Add(ctx, res(t, v, 10*(i+1), "A"+strconv.Itoa(i+1)), "before the kill"); err != nil {
			t.Fatal(err)
		}
	}
	items0, _ := db.List(ctx, stock.Filter{})
	hist0, _ := db.History(ctx, 0)
	db.Close()

	cmd := helper(t, "import", url, "150000")
	out, _ := cmd.StdoutPipe()
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	lines := bufio.NewScanner(out)
	if !lines.Scan() || lines.Text() != "importing" {
		cmd.Process.Kill()
		t.Fatalf("helper did not start importing: %q", lines.Text())
	}
	// Kill once the transaction has written rows: the server shows it
	// idle or active in a transaction that has inserted into stock.
	time.Sleep(1500 * time.Millisecond)
	if err := cmd.Process.Signal(syscall.SIGKILL); err != nil {
		t.Fatal(err)
	}
	rest, _ := io.ReadAll(out)
	cmd.Wait()
	if strings.Contains(string(rest), "committed") {
		t.Fatalf("the import finished before the kill; make it larger")
	}
	db, err = Open(url)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	// The server ends the killed session's transaction; wait for it.
	deadline := time.Now().Add(10 * time.Second)
	for {
		var n int
		db.SQL().QueryRow(`SELECT COUNT(*) FROM pg_stat_activity WHERE datname = current_database() AND pid <> pg_backend_pid()`).Scan(&n)
		if n == 0 || time.Now().After(deadline) {
			break
		}
		time.Sleep(50 * time.Millisecond)
	}
	items, _ := db.List(ctx, stock.Filter{})
	hist, _ := db.History(ctx, 0)
	if fmt.Sprint(items) != fmt.Sprint(items0) || fmt.Sprint(hist) != fmt.Sprint(hist0) {
		t.Fatalf("the killed import left something: %d rows (had %d), %d ledger entries (had %d)", len(items), len(items0), len(hist), len(hist0))
	}
	if _, _, err := db.Add(ctx, res(t, "47k", 1, "A6"), "after the kill"); err != nil {
		t.Fatal(err)
	}
}

// TestBenchesCreateOneServerDatabase: pairs of processes put the schema
// into one empty server database at the same moment (two benches on their
// first command): both succeed and each migration is applied once, since
// every step first takes the writers' lock.
func TestBenchesCreateOneServerDatabase(t *testing.T) {
	if testing.Short() {
		t.Skip("starts 20 subprocesses")
	}
	for pair := 0; pair < 10; pair++ {
		url := newPostgresDatabase(t)
		openTogether(t, pair, url)
	}
}
