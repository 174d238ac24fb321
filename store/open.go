package store

import (
	"bytes"
	"context"
	"database/sql"
	"errors"
	"fmt"
	"io"
	"math/rand"
	"net/url"
	"os"
	"path/filepath"
	"time"

	"drawerfit/fault"
	"drawerfit/migrations"
)

// Mode says what OpenMode may do to the file.
type Mode int

const (
	// ReadWrite opens an existing drawerfit database for reading and
	// writing and brings its schema up to date. A missing file is a
	// fault.NotFound error.
	ReadWrite Mode = iota
	// Create is ReadWrite that also creates a missing file (never its
	// folder). DB.Created tells whether it did.
	Create
	// ReadOnly opens an existing drawerfit database for reading only: it
	// takes no write lock, runs no migration and creates no file, so it
	// works on a file or folder the user may only read and while another
	// process holds the write lock. A file whose schema is older than this
	// binary's is refused with advice to upgrade it.
	ReadOnly
)

// sqliteHeader is the first 16 bytes of every SQLite 3 database file
// (SQLite file format documentation, "The Database Header", offset 0).
var sqliteHeader = []byte("SQLite format 3\x00")

// fileState is what inspect found at a path.
type fileState int

const (
	stateMissing   fileState = iota
	stateNew                 // an empty file, or a SQLite file with no tables
	stateDrawerfit           // a drawerfit database; version says which schema
)

// OpenMode opens the stock database at path as mode says. Before anything
// can change the file it checks, through a read-only connection, that the
// file is a drawerfit database (or empty): a file that is not is refused
// with a fault.Conflict and left byte for byte as it was. A schema newer
// than this binary knows is refused the same way.
func OpenMode(ctx context.Context, path string, mode Mode) (*DB, error) {
	if path == "" {
		return nil, fault.Invalidf("no database path given")
	}
	if IsServerURL(path) {
		return openPostgres(ctx, path, mode)
	}
	abs, err := filepath.Abs(path)
	if err != nil {
		return nil, fmt.Errorf("open stock database %s: %w", path, err)
	}
	known := migrations.Latest()
	state, version, err := inspect(ctx, abs)
	if err != nil {
		return nil, err
	}
	if version > known {
		return nil, fault.Conflictf("stock database %s has schema version %d, but this drawerfit knows only versions up to %d; use a newer drawerfit (the file was left unchanged)", abs, version, known)
	}
	switch {
	case state == stateMissing && mode != Create:
		return nil, fault.NotFoundf("no stock database at %s", abs)
	case state == stateMissing:
		dir := filepath.Dir(abs)
		if fi, err := os.Stat(dir); err != nil || !fi.IsDir() {
			return nil, fault.NotFoundf("cannot create the stock database %s: the folder %s does not exist (drawerfit creates no folders except its default data folder)", abs, dir)
		}
		// Create the empty file first: a folder the user may not write is
		// then a plain message, and a second process creating the same
		// file at this moment finds it (empty counts as new).
		f, err := os.OpenFile(abs, os.O_RDWR|os.O_CREATE|os.O_EXCL, 0o644)
		switch {
		case err == nil:
			f.Close()
		case errors.Is(err, os.ErrExist):
		case errors.Is(err, os.ErrPermission):
			return nil, fault.Conflictf("cannot create the stock database %s: the folder %s is read-only for this user", abs, dir)
		default:
			return nil, fmt.Errorf("create stock database %s: %w", abs, err)
		}
	case state == stateNew && mode == ReadOnly:
		return nil, fault.NotFoundf("%s is an empty file, not yet a stock database", abs)
	}
	if mode == ReadOnly {
		if version < known {
			return nil, fault.Conflictf("the stock database at %s has schema version %d, older than this drawerfit's %d; a command that only reads does not change it: upgrade it once with drawerfit stock upgrade", abs, version, known)
		}
		return openReadOnly(ctx, abs)
	}
	if state != stateMissing {
		// SQLite falls back to reading silently when it cannot write the
		// file; find out now and say so plainly.
		f, err := os.OpenFile(abs, os.O_RDWR, 0)
		if err != nil {
			if errors.Is(err, os.ErrPermission) {
				return nil, fault.Conflictf("the stock database at %s is read-only: this command changes the stock, but this user may not write the file; commands that only read still work", abs)
			}
			return nil, fmt.Errorf("open stock database %s: %w", abs, err)
		}
		f.Close()
	}
	u := url.URL{Scheme: "file", Path: filepath.ToSlash(abs), RawQuery: dsnQuery()}
	sdb, err := sql.Open("sqlite", u.String())
	if err != nil {
		return nil, fmt.Errorf("open stock database %s: %w", abs, err)
	}
	db := &DB{sql: &pool{DB: sdb}, path: abs, created: state != stateDrawerfit}
	// A current file needs no migration step, so opening it takes no
	// write lock.
	if err := db.prepareWritable(ctx, state != stateDrawerfit || version < known); err != nil {
		sdb.Close()
		return nil, Plain(err, abs)
	}
	return db, nil
}

// prepareWritable switches a checked file to WAL (written once into the
// file) and applies missing migrations. Two processes doing this on one
// new file at the same moment can meet SQLite's locks in places where it
// reports "busy" without waiting (changing the journal mode, recovering a
// WAL that the other is creating), so a busy error is retried, after a
// short random pause, until BusyTimeout has passed.
func (db *DB) prepareWritable(ctx context.Context, needMigrate bool) error {
	deadline := time.Now().Add(BusyTimeout)
	for {
		err := db.prepareOnce(ctx, needMigrate)
		if err == nil || !isBusy(err) || time.Now().After(deadline) {
			return err
		}
		select {
		case <-ctx.Done():
			return ctx.Err()
		case <-time.After(time.Duration(5+rand.Intn(20)) * time.Millisecond):
		}
	}
}

func (db *DB) prepareOnce(ctx context.Context, needMigrate bool) error {
	var jm string
	if err := db.sql.QueryRowContext(ctx, `PRAGMA journal_mode`).Scan(&jm); err != nil {
		return fmt.Errorf("open stock database %s: %w", db.path, err)
	}
	if jm != "wal" {
		if err := db.sql.QueryRowContext(ctx, `PRAGMA journal_mode = WAL`).Scan(&jm); err != nil {
			return fmt.Errorf("open stock database %s: %w", db.path, err)
		}
	}
	if !needMigrate {
		return nil
	}
	return migrate(ctx, db.sql.DB, db.path, migrations.All())
}

// openReadOnly opens a checked, current database for reading. A database
// in WAL mode needs its shared-memory file; in a folder the user may not
// write, with no writer at work (no -wal file), SQLite cannot create it,
// and the file is read as immutable instead (SQLite URI parameter
// immutable=1): no process can be changing it without that -wal file.
func openReadOnly(ctx context.Context, abs string) (*DB, error) {
	sdb, err := openRO(ctx, abs)
	if err != nil {
		return nil, Plain(err, abs)
	}
	return &DB{sql: &pool{DB: sdb}, path: abs, readOnly: true}, nil
}

// openRO opens a read-only pool on abs and checks that it can read.
func openRO(ctx context.Context, abs string) (*sql.DB, error) {
	try := func(immutable bool) (*sql.DB, error) {
		q := url.Values{}
		q.Set("mode", "ro")
		if immutable {
			q.Set("immutable", "1")
		}
		q.Add("_pragma", fmt.Sprintf("busy_timeout(%d)", BusyTimeout.Milliseconds()))
		q.Add("_pragma", "query_only(1)")
		u := url.URL{Scheme: "file", Path: filepath.ToSlash(abs), RawQuery: q.Encode()}
		sdb, err := sql.Open("sqlite", u.String())
		if err != nil {
			return nil, err
		}
		var n int
		if err := sdb.QueryRowContext(ctx, `SELECT COUNT(*) FROM sqlite_schema`).Scan(&n); err != nil {
			sdb.Close()
			return nil, err
		}
		return sdb, nil
	}
	sdb, err := try(false)
	if err == nil {
		return sdb, nil
	}
	if _, werr := os.Stat(abs + "-wal"); sqliteCode(err) == codeCantOpen || sqliteCode(err) == codeReadOnly {
		if errors.Is(werr, os.ErrNotExist) {
			if sdb, err2 := try(true); err2 == nil {
				return sdb, nil
			}
		}
	}
	return nil, fmt.Errorf("open stock database %s: %w", abs, err)
}

// inspect looks at the file at abs without changing it: missing, new
// (empty, or SQLite with no tables) or a drawerfit database with its
// schema version. Anything else is a fault.Conflict that says the file
// was left unchanged.
func inspect(ctx context.Context, abs string) (fileState, int, error) {
	fi, err := os.Stat(abs)
	if errors.Is(err, os.ErrNotExist) {
		return stateMissing, 0, nil
	}
	if err != nil {
		if errors.Is(err, os.ErrPermission) {
			return 0, 0, fault.Conflictf("cannot read the stock database at %s: permission denied", abs)
		}
		return 0, 0, fmt.Errorf("open stock database %s: %w", abs, err)
	}
	if fi.IsDir() {
		return 0, 0, fault.Invalidf("stock database %s is a folder", abs)
	}
	if !fi.Mode().IsRegular() {
		return 0, 0, fault.Invalidf("stock database %s is not a regular file", abs)
	}
	if fi.Size() == 0 {
		return stateNew, 0, nil
	}
	f, err := os.Open(abs)
	if err != nil {
		if errors.Is(err, os.ErrPermission) {
			return 0, 0, fault.Conflictf("cannot read the stock database at %s: permission denied", abs)
		}
		return 0, 0, fmt.Errorf("open stock database %s: %w", abs, err)
	}
	head := make([]byte, len(sqliteHeader))
	_, err = io.ReadFull(f, head)
	f.Close()
	if err != nil || !bytes.Equal(head, sqliteHeader) {
		return 0, 0, fault.Conflictf("%s is not a SQLite database, so not a drawerfit stock database; give another --db file (this one was left unchanged)", abs)
	}
	sdb, err := openRO(ctx, abs)
	if err != nil {
		return 0, 0, Plain(err, abs)
	}
	defer sdb.Close()
	state, version, err := fingerprint(ctx, sdb, abs)
	if err != nil {
		return 0, 0, Plain(err, abs)
	}
	return state, version, nil
}

// querierCtx is what fingerprint reads through (*sql.DB or *sql.Tx).
type querierCtx interface {
	QueryContext(ctx context.Context, q string, args ...any) (*sql.Rows, error)
	QueryRowContext(ctx context.Context, q string, args ...any) *sql.Row
}

// fingerprint tells a drawerfit database from other SQLite files: a file
// with no tables is new; otherwise it must have the schema_version table,
// and every version recorded there that this binary knows must carry the
// name of this binary's migration file of that number. Another program's
// schema_version table does not pass.
func fingerprint(ctx context.Context, q querierCtx, abs string) (fileState, int, error) {
	return fingerprintOf(ctx, q, abs, false)
}

func fingerprintOf(ctx context.Context, q querierCtx, abs string, pg bool) (fileState, int, error) {
	var tables, hasSchema int
	tablesQuery := `SELECT COUNT(*), COALESCE(SUM(name = 'schema_version'), 0) FROM sqlite_schema
		WHERE type = 'table' AND name NOT LIKE 'sqlite_%'`
	if pg {
		tablesQuery = `SELECT COUNT(*), COUNT(*) FILTER (WHERE table_name = 'schema_version') FROM information_schema.tables
		WHERE table_schema = current_schema()`
	}
	if err := q.QueryRowContext(ctx, tablesQuery).Scan(&tables, &hasSchema); err != nil {
		return 0, 0, fmt.Errorf("read the schema of %s: %w", abs, err)
	}
	if tables == 0 {
		return stateNew, 0, nil
	}
	foreign := fault.Conflictf("%s is a SQLite database but not a drawerfit stock database; give another --db file (this one was left unchanged)", abs)
	if pg {
		foreign = fault.Conflictf("the PostgreSQL database %s holds tables that are not a drawerfit stock; give an empty database or one drawerfit made (nothing was changed)", abs)
	}
	if hasSchema == 0 {
		return 0, 0, foreign
	}
	rows, err := q.QueryContext(ctx, `SELECT version, name FROM schema_version ORDER BY version`)
	if err != nil {
		return 0, 0, foreign
	}
	defer rows.Close()
	ms := migrations.All()
	if pg {
		ms = migrations.Postgres()
	}
	version := 0
	for rows.Next() {
		var v int
		var name string
		if err := rows.Scan(&v, &name); err != nil {
			return 0, 0, foreign
		}
		if v != version+1 {
			return 0, 0, foreign
		}
		if v <= len(ms) && ms[v-1].Name != name {
			return 0, 0, foreign
		}
		version = v
	}
	if err := rows.Err(); err != nil {
		return 0, 0, fmt.Errorf("read the schema version of %s: %w", abs, err)
	}
	if version == 0 && tables > 1 {
		return 0, 0, foreign
	}
	return stateDrawerfit, version, nil
}
