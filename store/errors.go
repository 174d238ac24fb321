package store

import (
	"errors"
	"fmt"
	"regexp"

	"github.com/jackc/pgx/v5/pgconn"
	"modernc.org/sqlite"

	"drawerfit/fault"
)

// SQLite primary result codes (SQLite documentation, "Result and Error
// Codes"); an extended code keeps the primary one in its low byte.
const (
	codeBusy     = 5
	codeLocked   = 6
	codeReadOnly = 8
	codeIOErr    = 10
	codeCorrupt  = 11
	codeFull     = 13
	codeCantOpen = 14
	codeNotADB   = 26
)

// sqliteCode returns the primary SQLite result code in err's chain, or 0.
func sqliteCode(err error) int {
	var se *sqlite.Error
	if errors.As(err, &se) {
		return se.Code() & 0xff
	}
	return 0
}

func isBusy(err error) bool {
	c := sqliteCode(err)
	return c == codeBusy || c == codeLocked
}

// rawCode matches the "(1544)" or "(5) (SQLITE_BUSY)" that the driver
// appends to SQLite's messages.
var rawCode = regexp.MustCompile(`\s*\(\d+\)(\s*\(SQLITE_[A-Z_]+\))?`)

// Plain returns err in words a user can act on when its chain holds a
// SQLite error: a busy or read-only database, a full disk, a damaged or
// foreign file, each naming the database at path, and never SQLite's
// numeric codes. Any other error is returned unchanged.
func Plain(err error, path string) error {
	if pe := pgError(err); pe != nil {
		return plainPostgres(err, pe, path)
	}
	c := sqliteCode(err)
	if c == 0 {
		return err
	}
	var f *fault.Error
	if errors.As(err, &f) {
		return err // already in words
	}
	switch c {
	case codeBusy, codeLocked:
		return fault.Conflictf("the stock database at %s is busy: another process has held its write lock for more than %s (a large import?); this command changed nothing, try it again when that one has finished", path, BusyTimeout)
	case codeReadOnly:
		return fault.Conflictf("the stock database at %s is read-only: this command changes the stock, but this user may not write the file or its folder (SQLite keeps %s-wal and %s-shm beside it); commands that only read still work", path, path, path)
	case codeCantOpen:
		return fault.Conflictf("cannot open the stock database at %s: the file or its folder cannot be opened by this user, or the folder does not exist", path)
	case codeNotADB:
		return fault.Conflictf("%s is not a SQLite database, so not a drawerfit stock database (it was left unchanged)", path)
	case codeCorrupt:
		return fault.Conflictf("the stock database at %s is damaged (SQLite finds it corrupt); restore it from a backup or an export", path)
	case codeFull:
		return fault.Conflictf("the disk holding the stock database at %s is full; this command changed nothing", path)
	case codeIOErr:
		return fault.Conflictf("reading or writing the stock database at %s failed with an input/output error from the disk", path)
	}
	return fmt.Errorf("%s", rawCode.ReplaceAllString(err.Error(), ""))
}

// pgError returns the server error in err's chain, if any.
func pgError(err error) *pgconn.PgError {
	var pe *pgconn.PgError
	if errors.As(err, &pe) {
		return pe
	}
	return nil
}

// plainPostgres words the server's errors that a user meets: a writer
// that holds the lock too long, a read-only session or server, a full
// disk; others keep the server's message without its SQLSTATE code.
func plainPostgres(err error, pe *pgconn.PgError, name string) error {
	var f *fault.Error
	if errors.As(err, &f) {
		return err
	}
	switch pe.Code {
	case "55P03": // lock_not_available: lock_timeout passed
		return fault.Conflictf("the stock database at %s is busy: another bench has held its write lock for more than %s; this command changed nothing, try it again when that one has finished", name, BusyTimeout)
	case "25006": // read_only_sql_transaction
		return fault.Conflictf("the stock database at %s is read-only for this session: this command changes the stock", name)
	case "53100": // disk_full
		return fault.Conflictf("the disk of the server holding %s is full; this command changed nothing", name)
	case "42501": // insufficient_privilege
		return fault.Conflictf("the server refuses this user a change to the stock database at %s: %s", name, pe.Message)
	}
	return fmt.Errorf("stock database %s: %s", name, pe.Message)
}
