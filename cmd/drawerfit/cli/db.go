package cli

import (
	"context"
	"drawerfit/production"
	"fmt"
	"os"
	"path/filepath"

	"drawerfit/fault"
	"drawerfit/stock"
	"drawerfit/store"
)

// openStore opens the stock database (--db, else $DRAWERFIT_DB, else the
// file in the XDG data home; see Env.DefaultDBPath), creating its directory
// and the file on first use. The store's clock is e.Now. The caller closes
// it.
func (e *Env) openStore() (*store.DB, error) {
	path, err := e.DefaultDBPath()
	if err != nil {
		return nil, err
	}
	if dir := filepath.Dir(path); dir != "" {
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return nil, fmt.Errorf("create the directory for the stock database: %w", err)
		}
	}
	db, err := store.Open(path)
	if err != nil {
		return nil, err
	}
	db.Now = e.Now
	return db, nil
}

// stockItems returns the inventory that a command works on: the rows of
// the CSV file at csvPath when it is not empty (read and merged in memory,
// the database untouched), else the rows of the stock database. f selects
// rows either way.
func (e *Env) stockItems(ctx context.Context, csvPath string, f stock.Filter) ([]stock.Item, error) {
	var db *store.DB
	var err error
	if csvPath == "" {
		db, err = e.openStore()
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
	name := path
	in := e.In
	if path == "-" {
		name = "standard input"
	} else {
		f, err := os.Open(path)
		if err != nil {
			if os.IsNotExist(err) {
				return nil, fault.NotFoundf("stock file %s does not exist", path)
			}
			return nil, fmt.Errorf("open stock file: %w", err)
		}
		defer f.Close()
		in = f
	}
	items, err := stock.ReadCSV(in)
	if err != nil {
		return nil, fault.Invalidf("%s: %w", name, err)
	}
	return items, nil
}

// openDesign opens the stock database and loads saved design id; the caller
// closes the database.
func (e *Env) openDesign(id string) (*store.DB, *production.Design, error) {
	db, err := e.openStore()
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
