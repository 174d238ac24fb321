package store

import (
	"context"
	"crypto/sha256"
	"database/sql"
	"net/url"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"drawerfit/fault"
	"drawerfit/stock"
)

func fileHash(t *testing.T, path string) [32]byte {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return sha256.Sum256(b)
}

// foreignSQLite writes a SQLite file as another program would: the default
// rollback journal (header bytes 18-19 are 1, 1), and the given schema.
func foreignSQLite(t *testing.T, path, schema string) {
	t.Helper()
	sdb, err := sql.Open("sqlite", path)
	if err != nil {
		t.Fatal(err)
	}
	defer sdb.Close()
	if _, err := sdb.Exec(schema); err != nil {
		t.Fatal(err)
	}
}

// TestOpenRefusesForeignFilesUnchanged: whatever the mode, a file that is
// not a drawerfit database is refused before anything writes to it, and
// is byte for byte what it was (SHA-256 before and after).
func TestOpenRefusesForeignFilesUnchanged(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	files := []struct {
		name  string
		write func(t *testing.T, path string)
	}{
		{"text file", func(t *testing.T, p string) {
			os.WriteFile(p, []byte("kind,value,quantity\nR,4k7,10\n"), 0o644)
		}},
		{"SQLite file of another program", func(t *testing.T, p string) {
			foreignSQLite(t, p, `CREATE TABLE recipe (id INTEGER PRIMARY KEY, title TEXT);
				INSERT INTO recipe (title) VALUES ('lentil soup');`)
		}},
		// Another program's own version table at version 1: once, the
		// runner took it for its own and committed migration 0002 into it.
		{"SQLite file with its own schema_version table", func(t *testing.T, p string) {
			foreignSQLite(t, p, `CREATE TABLE schema_version (version INTEGER PRIMARY KEY, name TEXT NOT NULL, applied_at TEXT NOT NULL);
				INSERT INTO schema_version VALUES (1, 'create notes', '2029-01-01');
				CREATE TABLE notes (id INTEGER PRIMARY KEY, body TEXT);`)
		}},
	}
	for _, f := range files {
		for _, mode := range []struct {
			name string
			m    Mode
		}{{"create", Create}, {"read-write", ReadWrite}, {"read-only", ReadOnly}} {
			t.Run(f.name+"/"+mode.name, func(t *testing.T) {
				path := filepath.Join(t.TempDir(), "other.db")
				f.write(t, path)
				before := fileHash(t, path)
				db, err := OpenMode(ctx, path, mode.m)
				if err == nil {
					db.Close()
					t.Fatal("opened a foreign file")
				}
				if fault.KindOf(err) != fault.Conflict || !strings.Contains(err.Error(), "not a drawerfit stock database") ||
					!strings.Contains(err.Error(), "left unchanged") {
					t.Errorf("error %v", err)
				}
				if after := fileHash(t, path); after != before {
					t.Error("the refused file changed")
				}
				if _, err := os.Stat(path + "-wal"); err == nil {
					t.Error("a -wal file was left beside the refused file")
				}
			})
		}
	}
}

// TestOpenMissingCreatesNothing: only Create makes a file, and never a
// folder.
func TestOpenMissingCreatesNothing(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	dir := t.TempDir()
	for _, m := range []Mode{ReadWrite, ReadOnly} {
		path := filepath.Join(dir, "typo-stok.db")
		_, err := OpenMode(ctx, path, m)
		if fault.KindOf(err) != fault.NotFound || !strings.Contains(err.Error(), path) {
			t.Errorf("mode %d: error %v", m, err)
		}
		if _, err := os.Stat(path); err == nil {
			t.Errorf("mode %d created the file", m)
		}
	}
	path := filepath.Join(dir, "no", "such", "folder", "stock.db")
	_, err := OpenMode(ctx, path, Create)
	if fault.KindOf(err) != fault.NotFound || !strings.Contains(err.Error(), "does not exist") {
		t.Errorf("create in a missing folder: %v", err)
	}
	if _, err := os.Stat(filepath.Join(dir, "no")); err == nil {
		t.Error("a folder was created")
	}
	db, err := OpenMode(ctx, filepath.Join(dir, "new.db"), Create)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	if !db.Created() {
		t.Error("Created() is false for a new file")
	}
	db2, err := OpenMode(ctx, filepath.Join(dir, "new.db"), Create)
	if err != nil {
		t.Fatal(err)
	}
	defer db2.Close()
	if db2.Created() {
		t.Error("Created() is true for an existing database")
	}
}

// TestReadsDoNotWaitForAWriter: while another connection holds the write
// lock (as a long import does), a read-only open and its reads, and a
// read-write open of a current file, return at once instead of waiting
// BusyTimeout for the migration step's lock.
func TestReadsDoNotWaitForAWriter(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "stock.db")
	w, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer w.Close()
	if _, _, err := w.Add(ctx, stock.Item{Kind: stock.Resistor, Value: 4700, Quantity: 5}, ""); err != nil {
		t.Fatal(err)
	}
	holding, release := make(chan struct{}), make(chan struct{})
	done := make(chan error)
	go func() {
		done <- w.Tx(ctx, func(tx *Tx) error {
			if _, err := tx.SetQuantity(ctx, 1, 6, "long write"); err != nil {
				return err
			}
			close(holding)
			<-release
			return nil
		})
	}()
	<-holding
	start := time.Now()
	r, err := OpenMode(ctx, path, ReadOnly)
	if err != nil {
		t.Fatal(err)
	}
	items, err := r.List(ctx, stock.Filter{})
	r.Close()
	if err != nil || len(items) != 1 || items[0].Quantity != 5 {
		t.Fatalf("read during a write: %v %v", items, err)
	}
	rw, err := OpenMode(ctx, path, ReadWrite)
	if err != nil {
		t.Fatal(err)
	}
	rw.Close()
	// 2 s is far below BusyTimeout (10 s), which the old open waited.
	if d := time.Since(start); d > 2*time.Second {
		t.Errorf("opening and reading took %v while the write lock was held", d)
	}
	close(release)
	if err := <-done; err != nil {
		t.Fatal(err)
	}
}

// TestPlainBusy: SQLite's "database is locked (5) (SQLITE_BUSY)" reaches
// the user as a sentence naming the file, without the code.
func TestPlainBusy(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	db := openTest(t)
	holding, release, done := make(chan struct{}), make(chan struct{}), make(chan error)
	go func() {
		done <- db.Tx(ctx, func(tx *Tx) error { close(holding); <-release; return nil })
	}()
	<-holding
	defer func() { close(release); <-done }()
	u := url.URL{Scheme: "file", Path: filepath.ToSlash(db.Path()), RawQuery: "_pragma=busy_timeout(0)&_txlock=immediate"}
	sdb, err := sql.Open("sqlite", u.String())
	if err != nil {
		t.Fatal(err)
	}
	defer sdb.Close()
	_, err = sdb.BeginTx(ctx, nil)
	if err == nil {
		t.Fatal("no busy error")
	}
	msg := Plain(err, db.Path()).Error()
	if !strings.Contains(msg, "is busy") || !strings.Contains(msg, db.Path()) || strings.Contains(msg, "(5)") || strings.Contains(msg, "SQLITE_") {
		t.Errorf("plain message %q (from %q)", msg, err)
	}
}

// TestReadOnlyHandleRefusesWrites: a read-only DB says so instead of
// reaching SQLite.
func TestReadOnlyHandleRefusesWrites(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "stock.db")
	w, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	w.Close()
	r, err := OpenMode(ctx, path, ReadOnly)
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	_, _, err = r.Add(ctx, stock.Item{Kind: stock.Resistor, Value: 100, Quantity: 1}, "")
	if fault.KindOf(err) != fault.Conflict || !strings.Contains(err.Error(), "reading only") {
		t.Errorf("write through a read-only handle: %v", err)
	}
}

// TestWriteWaitingIsReported: a write that waits for another's lock says
// so after WaitNotice, once; a write that gets the lock at once says
// nothing.
func TestWriteWaitingIsReported(t *testing.T) { eachDialect(t, testWriteWaitingIsReported) }

func testWriteWaitingIsReported(t *testing.T, open opener) {
	t.Parallel()
	ctx := context.Background()
	db := open(t)
	var said []string
	var mu sync.Mutex
	db.Waiting = func(msg string) { mu.Lock(); said = append(said, msg); mu.Unlock() }
	if err := db.Tx(ctx, func(tx *Tx) error { time.Sleep(WaitNotice + 200*time.Millisecond); return nil }); err != nil {
		t.Fatal(err)
	}
	if len(said) != 0 {
		t.Fatalf("a slow transaction that waited for nobody said %q", said)
	}
	holding, release, done := make(chan struct{}), make(chan struct{}), make(chan error)
	go func() {
		done <- db.Tx(ctx, func(tx *Tx) error { close(holding); <-release; return nil })
	}()
	<-holding
	time.AfterFunc(WaitNotice+500*time.Millisecond, func() { close(release) })
	if err := db.Tx(ctx, func(tx *Tx) error { return nil }); err != nil {
		t.Fatal(err)
	}
	<-done
	mu.Lock()
	defer mu.Unlock()
	if len(said) != 1 || !strings.Contains(said[0], "waiting for another process") {
		t.Fatalf("waiting said %q", said)
	}
}
