package cli

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"drawerfit/production"

	"drawerfit/fault"
	"drawerfit/stock"
	"drawerfit/store"
)

// openStore opens the stock database for a command that changes it but
// adds no stock (set, remove, build, designs remove, fit --save): the
// database must exist. See openStoreAt for the location.
func (e *Env) openStore() (*store.DB, error) { return e.openStoreMode(store.ReadWrite) }

// openStoreForReading opens the stock database for a command that only
// reads: read-only, without the write lock, running no migration, so it
// works on a file the user may only read and while another process writes.
func (e *Env) openStoreForReading() (*store.DB, error) { return e.openStoreMode(store.ReadOnly) }

// openStoreCreating opens the stock database for a command that adds stock
// (import, add): the only commands that create a missing database. It says
// so on the error stream when it does.
func (e *Env) openStoreCreating() (*store.DB, error) {
	db, err := e.openStoreMode(store.Create)
	if err != nil {
		return nil, err
	}
	if db.Created() {
		fmt.Fprintf(e.Err, "created a new stock database at %s\n", db.Path())
	}
	return db, nil
}

// openStoreMode opens the stock database (--db, else $DRAWERFIT_DB, else
// the file in the XDG data home; see Env.DefaultDBPath) as mode says. Only
// the default data folder is created when missing, and only by a command
// that creates the database; a --db or $DRAWERFIT_DB in a missing folder is
// refused, since it is most likely a typing mistake. A value with a URL
// scheme is never taken as a file name. The store's clock is e.Now. The
// caller closes it.
func (e *Env) openStoreMode(mode store.Mode) (*store.DB, error) {
	path, isDefault, err := e.dbLocation()
	if err != nil {
		return nil, err
	}
	if isDefault && mode == store.Create && !store.IsServerURL(path) {
		if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
			return nil, fmt.Errorf("create the default data folder for the stock database: %w", err)
		}
	}
	ctx := e.Ctx
	if ctx == nil {
		ctx = context.Background()
	}
	db, err := store.OpenMode(ctx, path, mode)
	if err != nil {
		if fault.KindOf(err) == fault.NotFound && mode != store.Create && !store.IsServerURL(path) {
			if _, serr := os.Stat(path); serr != nil {
				abs, _ := filepath.Abs(path)
				return nil, fault.NotFoundf("no stock database at %s; create one by adding stock: drawerfit stock import FILE (or drawerfit stock add); check --db and $DRAWERFIT_DB for a typing mistake", abs)
			}
		}
		return nil, err
	}
	db.Now = e.Now
	db.Waiting = func(msg string) { fmt.Fprintln(e.Err, msg) }
	return db, nil
}

// dbLocation returns the stock database path and whether it is the
// default location. A --db or $DRAWERFIT_DB value with a URL scheme
// (letters, then a colon, as in postgres://...) is refused: it is never a
// file name. A file whose name has such a colon can be given as ./NAME.
func (e *Env) dbLocation() (string, bool, error) {
	path, err := e.DefaultDBPath()
	if err != nil {
		return "", false, err
	}
	explicit := e.DBPath != "" || (e.Getenv != nil && e.Getenv("DRAWERFIT_DB") != "")
	if store.IsServerURL(path) {
		return path, false, nil
	}
	if scheme, ok := urlScheme(path); ok {
		if strings.Contains(path, "://") {
			return "", false, fault.Invalidf("the stock database %q is a URL with the scheme %q, which drawerfit does not know; give a file path or a postgres:// URL", store.RedactURL(path), scheme)
		}
		return "", false, fault.Invalidf("the stock database %q starts like a URL with the scheme %q; for a file whose name has a colon write ./%s", path, scheme, path)
	}
	return path, !explicit, nil
}

// urlScheme returns the scheme of s when s starts like a URL: a letter,
// then letters, digits, +, - or ., then a colon (RFC 3986, section 3.1).
// One letter before the colon is a drive letter (C:\...), not a scheme.
func urlScheme(s string) (string, bool) {
	i := strings.IndexByte(s, ':')
	if i < 2 {
		return "", false
	}
	for j, r := range s[:i] {
		isAlpha := (r >= 'a' && r <= 'z') || (r >= 'A' && r <= 'Z')
		if !isAlpha && (j == 0 || !(r >= '0' && r <= '9' || r == '+' || r == '-' || r == '.')) {
			return "", false
		}
	}
	return strings.ToLower(s[:i]), true
}

// stockItems returns the inventory that a command works on: the rows of
// the CSV file at csvPath when it is not empty (read and merged in memory,
// the database untouched), else the rows of the stock database. f selects
// rows either way.
func (e *Env) stockItems(ctx context.Context, csvPath string, f stock.Filter) ([]stock.Item, error) {
	var db *store.DB
	var err error
	if csvPath == "" {
		db, err = e.openStoreForReading()
	} else {
		db, err = e.memoryStoreFrom(ctx, csvPath)
	}
	if err != nil {
		return nil, err
	}
	defer db.Close()
	return db.List(ctx, f)
}

// memoryStoreFrom reads a CSV file (or standard input for "-") into a new
// in-memory store.
func (e *Env) memoryStoreFrom(ctx context.Context, csvPath string) (*store.DB, error) {
	items, err := e.readStockCSV(csvPath)
	if err != nil {
		return nil, err
	}
	db, err := store.OpenMemory()
	if err != nil {
		return nil, err
	}
	db.Now = e.Now
	if _, err := db.Import(ctx, items, false); err != nil {
		db.Close()
		return nil, err
	}
	return db, nil
}

// readStockCSV reads and checks a stock CSV file; "-" is standard input.
// A bad file is a fault.Invalid error that lists its problems.
func (e *Env) readStockCSV(path string) ([]stock.Item, error) {
	items, _, err := e.readStockCSVWith(path, stock.CSVOptions{})
	return items, err
}

// readStockCSVWith is readStockCSV with options (columns to ignore).
func (e *Env) readStockCSVWith(path string, opts stock.CSVOptions) ([]stock.Item, stock.CSVInfo, error) {
	name := path
	in := e.In
	if path == "-" {
		name = "standard input"
	} else {
		f, err := os.Open(path)
		if err != nil {
			if os.IsNotExist(err) {
				return nil, stock.CSVInfo{}, fault.NotFoundf("stock file %s does not exist", path)
			}
			return nil, stock.CSVInfo{}, fmt.Errorf("open stock file: %w", err)
		}
		defer f.Close()
		in = f
	}
	items, info, err := stock.ReadCSVWith(in, opts)
	if err != nil {
		return nil, info, fault.Invalidf("%s: %w", name, err)
	}
	return items, info, nil
}

// openDesign opens the stock database (for reading only unless write) and
// loads saved design id; the caller closes the database.
func (e *Env) openDesign(id string, write bool) (*store.DB, *production.Design, error) {
	open := e.openStoreForReading
	if write {
		open = e.openStore
	}
	db, err := open()
	if err != nil {
		return nil, nil, err
	}
	d, err := db.Design(e.Ctx, id)
	if err != nil {
		db.Close()
		return nil, nil, err
	}
	return db, d, nil
}
