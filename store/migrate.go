package store

import (
	"context"
	"database/sql"
	"fmt"
	"time"

	"drawerfit/fault"
	"drawerfit/migrations"
)

// schemaTable records applied migrations. It is created by the runner, not
// by a migration, so that the runner can read the version of any file.
const schemaTable = `CREATE TABLE IF NOT EXISTS schema_version (
    version    INTEGER PRIMARY KEY,
    name       TEXT NOT NULL,
    applied_at TEXT NOT NULL
)`

// migrate applies the migrations in ms that the file lacks, each in its own
// transaction, re-reading the version inside it so that two processes
// opening a new file at once apply each step once.
func migrate(ctx context.Context, sdb *sql.DB, path string, ms []migrations.Migration) error {
	known := 0
	if len(ms) > 0 {
		known = ms[len(ms)-1].Version
	}
	for {
		applied, err := migrateStep(ctx, sdb, path, ms, known)
		if err != nil {
			return err
		}
		if !applied {
			return nil
		}
	}
}

// migrateStep applies the next migration, if any, and reports whether it
// did.
//
// A step runs on one connection with foreign-key enforcement off, as the
// SQLite manual's procedure for rebuilding a table requires (the pragma
// cannot change inside a transaction); PRAGMA foreign_key_check then
// refuses a step that leaves a broken reference, before the commit.
func migrateStep(ctx context.Context, sdb *sql.DB, path string, ms []migrations.Migration, known int) (applied bool, err error) {
	conn, err := sdb.Conn(ctx)
	if err != nil {
		return false, fmt.Errorf("open stock database %s: %w", path, err)
	}
	defer conn.Close()
	if _, err := conn.ExecContext(ctx, `PRAGMA foreign_keys = OFF`); err != nil {
		return false, fmt.Errorf("open stock database %s: %w", path, err)
	}
	defer func() {
		if _, rerr := conn.ExecContext(context.Background(), `PRAGMA foreign_keys = ON`); rerr != nil && err == nil {
			applied, err = false, fmt.Errorf("open stock database %s: %w", path, rerr)
		}
	}()
	tx, err := conn.BeginTx(ctx, nil)
	if err != nil {
		return false, fmt.Errorf("open stock database %s: %w", path, err)
	}
	defer tx.Rollback()

	// The file was checked before any change; check again inside the
	// transaction, which another process may have reached first.
	state, _, err := fingerprint(ctx, tx, path)
	if err != nil {
		return false, err
	}
	if state == stateNew {
		if _, err := tx.ExecContext(ctx, schemaTable); err != nil {
			return false, fmt.Errorf("create schema table in %s: %w", path, err)
		}
	}
	var cur int
	if err := tx.QueryRowContext(ctx, `SELECT COALESCE(MAX(version), 0) FROM schema_version`).Scan(&cur); err != nil {
		return false, fmt.Errorf("read schema version of %s: %w", path, err)
	}
	if cur > known {
		return false, fault.Conflictf("stock database %s has schema version %d, but this drawerfit knows only versions up to %d; use a newer drawerfit (the file was left unchanged)", path, cur, known)
	}
	if cur == known {
		return false, tx.Commit()
	}
	m := ms[cur] // ms[i] has version i+1
	if m.Version != cur+1 {
		return false, fmt.Errorf("migrations out of order: expected version %d, have %d", cur+1, m.Version)
	}
	if _, err := tx.ExecContext(ctx, m.SQL); err != nil {
		return false, fmt.Errorf("apply migration %s to %s: %w", m.Name, path, err)
	}
	if _, err := tx.ExecContext(ctx, `INSERT INTO schema_version (version, name, applied_at) VALUES (?, ?, ?)`,
		m.Version, m.Name, formatTime(time.Now())); err != nil {
		return false, fmt.Errorf("record migration %s in %s: %w", m.Name, path, err)
	}
	// Foreign keys must still hold after the step (a migration that
	// rebuilds a table can break them silently while they are deferred).
	rows, err := tx.QueryContext(ctx, `PRAGMA foreign_key_check`)
	if err != nil {
		return false, fmt.Errorf("check foreign keys after %s: %w", m.Name, err)
	}
	bad := rows.Next()
	rows.Close()
	if bad {
		return false, fmt.Errorf("migration %s leaves rows that break foreign keys in %s", m.Name, path)
	}
	if err := tx.Commit(); err != nil {
		return false, fmt.Errorf("commit migration %s to %s: %w", m.Name, path, err)
	}
	return true, nil
}
