package store

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"net/url"
	"strings"
	"time"

	"github.com/jackc/pgx/v5"
	"github.com/jackc/pgx/v5/pgconn"
	"github.com/jackc/pgx/v5/stdlib"

	"drawerfit/fault"
	"drawerfit/migrations"
)

// writersLock is the key of the PostgreSQL advisory lock that every
// writing transaction (and every migration step) takes: "drawerfi" read as
// a 64-bit number, unlikely to meet another program's key in the same
// database.
const writersLock int64 = 0x6472617765726669

// IsServerURL reports whether s names a PostgreSQL server database
// (postgres:// or postgresql://) rather than a file.
func IsServerURL(s string) bool {
	l := strings.ToLower(s)
	return strings.HasPrefix(l, "postgres://") || strings.HasPrefix(l, "postgresql://")
}

// RedactURL returns a server URL with its password, if any, replaced, for
// messages; anything else is returned as it is.
func RedactURL(s string) string {
	u, err := url.Parse(s)
	if err != nil || u.User == nil {
		return s
	}
	if _, has := u.User.Password(); has {
		u.User = url.UserPassword(u.User.Username(), "xxxxx")
		return u.String()
	}
	return s
}

// lockWriters takes the writers' lock for the rest of the transaction,
// waiting at most BusyTimeout for another bench's write to finish.
func lockWriters(ctx context.Context, tx *sql.Tx) error {
	if _, err := tx.ExecContext(ctx, fmt.Sprintf(`SET LOCAL lock_timeout = '%dms'`, BusyTimeout.Milliseconds())); err != nil {
		return fmt.Errorf("begin transaction: %w", err)
	}
	if _, err := tx.ExecContext(ctx, `SELECT pg_advisory_xact_lock($1)`, writersLock); err != nil {
		return fmt.Errorf("begin transaction: %w", err)
	}
	return nil
}

// openPostgres opens the stock on a PostgreSQL server. The database must
// exist (a server's databases are made by its administrator); Create may
// put the schema into an empty one, ReadWrite and ReadOnly need one that
// holds a drawerfit stock. ReadOnly sessions are read-only on the server
// too (default_transaction_read_only).
func openPostgres(ctx context.Context, rawURL string, mode Mode) (*DB, error) {
	name := RedactURL(rawURL)
	cfg, err := pgx.ParseConfig(rawURL)
	if err != nil {
		return nil, fault.Invalidf("the PostgreSQL URL %s is not valid: %v", name, errors.Unwrap(err))
	}
	if mode == ReadOnly {
		cfg.RuntimeParams["default_transaction_read_only"] = "on"
	}
	cfg.RuntimeParams["application_name"] = "drawerfit"
	sdb := stdlib.OpenDB(*cfg)
	db := &DB{sql: &pool{DB: sdb, pg: true}, path: name, readOnly: mode == ReadOnly}
	pingCtx, cancel := context.WithTimeout(ctx, BusyTimeout)
	defer cancel()
	if err := sdb.PingContext(pingCtx); err != nil {
		sdb.Close()
		return nil, fault.Conflictf("cannot reach the PostgreSQL database %s: %s", name, pgMessage(err))
	}
	state, version, err := fingerprintOf(ctx, db.sql, name, true)
	if err != nil {
		sdb.Close()
		return nil, err
	}
	known := migrations.Latest()
	switch {
	case version > known:
		sdb.Close()
		return nil, fault.Conflictf("the stock database %s has schema version %d, but this drawerfit knows only versions up to %d; use a newer drawerfit (nothing was changed)", name, version, known)
	case state == stateNew && mode != Create:
		sdb.Close()
		return nil, fault.NotFoundf("no stock database at %s (the database is empty)", name)
	case mode == ReadOnly && version < known:
		sdb.Close()
		return nil, fault.Conflictf("the stock database at %s has schema version %d, older than this drawerfit's %d; a command that only reads does not change it: upgrade it once with drawerfit stock upgrade", name, version, known)
	}
	db.created = state == stateNew
	if mode != ReadOnly && (state == stateNew || version < known) {
		if err := migratePostgres(ctx, db.sql, name, migrations.Postgres()); err != nil {
			sdb.Close()
			return nil, Plain(err, name)
		}
	}
	return db, nil
}

// migratePostgres applies the missing steps, each in one transaction that
// first takes the writers' lock, so that two benches opening a new
// database at once apply each step once.
func migratePostgres(ctx context.Context, p *pool, name string, ms []migrations.Migration) error {
	known := ms[len(ms)-1].Version
	for {
		applied, err := migratePostgresStep(ctx, p, name, ms, known)
		if err != nil || !applied {
			return err
		}
	}
}

func migratePostgresStep(ctx context.Context, p *pool, name string, ms []migrations.Migration, known int) (bool, error) {
	stx, err := p.BeginTx(ctx, nil)
	if err != nil {
		return false, fmt.Errorf("open stock database %s: %w", name, err)
	}
	defer stx.Rollback()
	if err := lockWriters(ctx, stx); err != nil {
		return false, err
	}
	tx := &Tx{Tx: stx, pg: true}
	state, cur, err := fingerprintOf(ctx, tx, name, true)
	if err != nil {
		return false, err
	}
	if state == stateNew {
		if _, err := tx.ExecContext(ctx, schemaTable); err != nil {
			return false, fmt.Errorf("create schema table in %s: %w", name, err)
		}
	}
	if cur >= known {
		return false, stx.Commit()
	}
	m := ms[cur]
	if _, err := tx.ExecContext(ctx, m.SQL); err != nil {
		return false, fmt.Errorf("apply migration %s to %s: %s", m.Name, name, pgMessage(err))
	}
	if _, err := tx.ExecContext(ctx, `INSERT INTO schema_version (version, name, applied_at) VALUES (?, ?, ?)`,
		m.Version, m.Name, formatTime(time.Now())); err != nil {
		return false, fmt.Errorf("record migration %s in %s: %w", m.Name, name, err)
	}
	if err := stx.Commit(); err != nil {
		return false, fmt.Errorf("commit migration %s to %s: %w", m.Name, name, err)
	}
	return true, nil
}

// pgMessage is the server's or the connection's message without the
// driver's decoration.
func pgMessage(err error) string {
	var pe *pgconn.PgError
	if errors.As(err, &pe) {
		return pe.Message
	}
	var ce *pgconn.ConnectError
	if errors.As(err, &ce) {
		return ce.Unwrap().Error()
	}
	return err.Error()
}
