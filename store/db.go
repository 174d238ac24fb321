// Package store keeps drawerfit's inventory in a SQLite file (pure Go,
// modernc.org/sqlite) or, for several benches sharing one stock, in a
// PostgreSQL database (pgx). *DB implements stock.Store for both.
//
// SQLite: every connection gets its settings from the connection string:
// foreign keys on, synchronous=FULL, a busy timeout, and transactions that
// begin IMMEDIATE (they take the write lock at the start, so two processes
// never deadlock upgrading a read to a write; the later one waits up to
// the busy timeout); the file is switched to WAL once, after it has been
// checked. PostgreSQL: every writing transaction first takes one advisory
// lock, so writers take turns exactly as on SQLite (see DB.Tx). The schema
// is the numbered files of package drawerfit/migrations for the dialect,
// applied when a command that writes opens the database.
//
// Public methods each run in one transaction and call private helpers that
// take the transaction. Other packages that keep their own tables in the
// same file (added as new migrations) share transactions through DB.Tx,
// whose *Tx offers the stock operations (Tx.Adjust, Tx.Get, ...) next to
// the plain *sql.Tx.
package store

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"net/url"
	"time"

	_ "modernc.org/sqlite" // registers the "sqlite" driver

	"drawerfit/fault"
	"drawerfit/migrations"
	"drawerfit/stock"
)

// BusyTimeout is how long a connection waits for another process's write
// transaction to finish before giving up (common practice, no source: long
// enough for any stock command, short enough to report a stuck process).
const BusyTimeout = 10 * time.Second

// DB is an open stock database. Its methods are safe for concurrent use.
type DB struct {
	sql      *pool
	path     string // the file's absolute path, or the server URL without its password
	created  bool
	readOnly bool

	// Now is the clock for ledger and row times (time.Now when nil). Tests
	// set it before use.
	Now func() time.Time

	// Waiting, when set, is told once when a writing transaction has
	// waited WaitNotice for another process's write to finish, with a
	// sentence that says so; the wait goes on up to BusyTimeout.
	Waiting func(msg string)
}

// WaitNotice is how long a write waits for the lock before DB.Waiting is
// told (common practice, no source: long enough not to show for ordinary
// turns, short enough that a person is not left wondering).
const WaitNotice = time.Second

var _ stock.Store = (*DB)(nil)

// dsnQuery is the connection string's query for a writable pool: the
// settings every pooled connection needs. The journal mode is not among
// them: it is written into the file, so Open sets it once, after checking
// that the file is a drawerfit database.
func dsnQuery() string {
	q := url.Values{}
	q.Add("_pragma", fmt.Sprintf("busy_timeout(%d)", BusyTimeout.Milliseconds()))
	q.Add("_pragma", "foreign_keys(1)")
	// FULL: a commit survives power loss too, not only a crash; the
	// ledger is small, the fsync cheap.
	q.Add("_pragma", "synchronous(FULL)")
	q.Set("_txlock", "immediate")
	return q.Encode()
}

// Open opens the stock database at path for reading and writing, creating
// the file (never its folder) if it does not exist. It is OpenMode with
// Create.
func Open(path string) (*DB, error) {
	return OpenMode(context.Background(), path, Create)
}

// OpenMemory opens a new, empty in-memory database with the current schema.
// It uses a single connection (each SQLite connection to :memory: is its own
// database). For tests and for one-shot runs on a CSV file.
func OpenMemory() (*DB, error) {
	sdb, err := sql.Open("sqlite", "file::memory:?"+dsnQuery())
	if err != nil {
		return nil, fmt.Errorf("open memory database: %w", err)
	}
	sdb.SetMaxOpenConns(1)
	sdb.SetMaxIdleConns(1)
	sdb.SetConnMaxLifetime(0)
	sdb.SetConnMaxIdleTime(0)
	db := &DB{sql: &pool{DB: sdb}, path: ":memory:"}
	if err := db.init(context.Background()); err != nil {
		sdb.Close()
		return nil, err
	}
	return db, nil
}

func (db *DB) init(ctx context.Context) error {
	if err := db.sql.PingContext(ctx); err != nil {
		return fmt.Errorf("open stock database %s: %w", db.path, err)
	}
	return migrate(ctx, db.sql.DB, db.path, migrations.All())
}

// Created reports whether Open made a new database (the file did not
// exist, or was empty).
func (db *DB) Created() bool { return db.created }

// ReadOnly reports whether the database was opened for reading only.
func (db *DB) ReadOnly() bool { return db.readOnly }

// Close closes the database.
func (db *DB) Close() error { return db.sql.Close() }

// Path returns the database file's absolute path (":memory:" for
// OpenMemory).
func (db *DB) Path() string { return db.path }

// SQL returns the underlying pool for read-only queries by packages that
// keep their own tables in the same file. Write through DB.Tx.
func (db *DB) SQL() *sql.DB { return db.sql.DB }

// SchemaVersion returns the schema version recorded in the file.
func (db *DB) SchemaVersion(ctx context.Context) (int, error) {
	var v int
	if err := db.sql.QueryRowContext(ctx, `SELECT COALESCE(MAX(version), 0) FROM schema_version`).Scan(&v); err != nil {
		return 0, fmt.Errorf("read schema version: %w", err)
	}
	return v, nil
}

func (db *DB) now() time.Time {
	if db.Now != nil {
		return db.Now().UTC()
	}
	return time.Now().UTC()
}

// Tx is one write transaction, handed to the function given to DB.Tx. It
// embeds *sql.Tx for a package's own statements and offers the stock
// operations so that they commit or roll back together with them. Do not
// call Commit or Rollback: DB.Tx does.
type Tx struct {
	*sql.Tx
	at time.Time
	pg bool
	// moves collects the ids of the ledger entries the transaction writes
	// (from INSERT ... RETURNING), so that a build links exactly its own.
	moves []int64
}

// Now returns the transaction's time: DB.Now read once when it began, so
// every row the transaction writes carries the same time.
func (tx *Tx) Now() time.Time { return tx.at }

// Tx runs fn inside one write transaction: it commits if fn returns nil and
// rolls back if fn returns an error or panics (the panic continues). The
// transaction takes the database's write lock at its start, so fn may read
// and then write without another process changing the rows in between.
// fn's error is returned unchanged.
func (db *DB) Tx(ctx context.Context, fn func(tx *Tx) error) (err error) {
	if db.readOnly {
		return fault.Conflictf("the stock database at %s was opened for reading only; this step changes it", db.path)
	}
	locked := func() {}
	if db.Waiting != nil {
		notice := time.AfterFunc(WaitNotice, func() {
			db.Waiting(fmt.Sprintf("waiting for another process to finish writing to the stock database at %s (up to %s)", db.path, BusyTimeout))
		})
		locked = func() { notice.Stop() }
		defer locked()
	}
	stx, err := db.sql.BeginTx(ctx, nil)
	if err != nil {
		return Plain(fmt.Errorf("begin transaction: %w", err), db.path)
	}
	if db.sql.pg {
		// One lock for every writing transaction: writers on the server
		// take turns, as SQLite's BEGIN IMMEDIATE makes them, so a
		// transaction that reads a quantity and writes it back can never
		// lose another bench's update, and at READ COMMITTED each
		// statement after the lock sees every commit before it. Writes
		// are short, so the queue is too; reads take no lock at all.
		if err := lockWriters(ctx, stx); err != nil {
			stx.Rollback()
			return Plain(err, db.path)
		}
	}
	locked() // the lock is held: no more waiting to report

	done := false
	defer func() {
		if !done {
			_ = stx.Rollback()
		}
	}()
	if err := fn(&Tx{Tx: stx, at: db.now(), pg: db.sql.pg}); err != nil {
		return Plain(err, db.path)
	}
	done = true
	if err := stx.Commit(); err != nil {
		_ = stx.Rollback()
		return Plain(fmt.Errorf("commit: %w", err), db.path)
	}
	return nil
}

// timeFormat keeps fixed-width UTC times so that text order is time order.
const timeFormat = "2006-01-02T15:04:05.000000000Z"

func formatTime(t time.Time) string { return t.UTC().Format(timeFormat) }

func parseTime(s string) (time.Time, error) {
	t, err := time.Parse(timeFormat, s)
	if err != nil {
		t, err = time.Parse(time.RFC3339Nano, s)
	}
	return t, err
}

var errNoRows = sql.ErrNoRows

func isNoRows(err error) bool { return errors.Is(err, errNoRows) }
