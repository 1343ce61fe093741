// Package history keeps a QC history: every recorded run of verify
// (check-standard recoveries) and solve (sample results) in one SQLite
// file, read back as runs and as per-compound, per-check-standard series
// for control charts and the Westgard multi-rule scheme (westgard.go).
//
// The file is written through modernc.org/sqlite (pure Go, no C
// toolchain). Each run is appended in one IMMEDIATE transaction, with a
// busy timeout, so two processes recording at once wait for each other
// and a writer killed mid-transaction leaves the file as it was (SQLite's
// rollback journal is rolled back when the file is next opened).
package history

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"os"
	"strings"
	"time"

	"huesolve/internal/pkgerr"

	"modernc.org/sqlite"
	sqlite3 "modernc.org/sqlite/lib"
)

// BusyTimeout is how long a writer waits for another process that holds
// the file's write lock before giving up with ErrLocked. A run's record
// takes milliseconds, so this is generous (project choice).
const BusyTimeout = 10 * time.Second

// ErrLocked: another process held the history file's lock for longer than
// BusyTimeout.
var ErrLocked = errors.New("history: file is locked")

// ErrDamaged: the file is not an SQLite database, or it fails SQLite's
// integrity check.
var ErrDamaged = errors.New("history: file is damaged or not a history database")

// ErrNewer: the file was written by a newer huesolve whose schema this one
// does not know.
var ErrNewer = errors.New("history: file has a newer schema")

// migrations are the schema's versions in order: migrations[i] takes a
// file from version i to i+1. A released migration is never edited; a
// change of schema appends one.
var migrations = []string{
	// 1: runs, their open-ended metadata, check results, sample results.
	`CREATE TABLE runs (
		id INTEGER PRIMARY KEY,
		kind TEXT NOT NULL,
		time_utc TEXT NOT NULL,
		tool_version TEXT NOT NULL,
		command_line TEXT NOT NULL,
		reference TEXT NOT NULL,
		reference_sha256 TEXT NOT NULL,
		pass INTEGER
	);
	CREATE TABLE run_meta (
		run_id INTEGER NOT NULL REFERENCES runs(id),
		key TEXT NOT NULL,
		value TEXT NOT NULL,
		PRIMARY KEY (run_id, key)
	);
	CREATE TABLE run_inputs (
		run_id INTEGER NOT NULL REFERENCES runs(id),
		path TEXT NOT NULL,
		sha256 TEXT NOT NULL
	);
	CREATE TABLE checks (
		run_id INTEGER NOT NULL REFERENCES runs(id),
		standard TEXT NOT NULL,
		compound TEXT NOT NULL,
		unit TEXT NOT NULL,
		known REAL NOT NULL,
		found REAL NOT NULL,
		se REAL,
		recovery_pct REAL,
		pass INTEGER NOT NULL,
		flags TEXT NOT NULL
	);
	CREATE TABLE samples (
		run_id INTEGER NOT NULL REFERENCES runs(id),
		sample TEXT NOT NULL,
		source TEXT NOT NULL,
		compound TEXT NOT NULL,
		unit TEXT NOT NULL,
		conc REAL,
		se REAL,
		lod REAL,
		loq REAL,
		flags TEXT NOT NULL
	);
	CREATE INDEX checks_series ON checks (compound, standard, run_id);`,
}

// SchemaVersion is the schema this huesolve writes.
func SchemaVersion() int { return len(migrations) }

// DB is an open history file.
type DB struct {
	path string
	db   *sql.DB
}

// Open opens the history file at path, creating it when it does not exist
// and bringing an older schema up to date. A file from a newer schema is
// refused (ErrNewer), as is a file that is not a database (ErrDamaged).
func Open(path string) (*DB, error) {
	if fi, err := os.Stat(path); err == nil && !fi.Mode().IsRegular() {
		return nil, pkgerr.Errorf("history", "%s is not a regular file", path)
	}
	if strings.ContainsRune(path, '?') {
		return nil, pkgerr.Errorf("history", "%s: a history file's name cannot hold a question mark", path)
	}
	dsn := path + "?_txlock=immediate" +
		fmt.Sprintf("&_pragma=busy_timeout(%d)", BusyTimeout.Milliseconds()) +
		"&_pragma=foreign_keys(1)"
	sdb, err := sql.Open("sqlite", dsn)
	if err != nil {
		return nil, pkgerr.Errorf("history", "%s: %w", path, err)
	}
	// One connection: a process records one run at a time, and the
	// busy timeout is a property of the connection.
	sdb.SetMaxOpenConns(1)
	d := &DB{path: path, db: sdb}
	if err := d.migrate(); err != nil {
		sdb.Close()
		return nil, err
	}
	return d, nil
}

// Close closes the file.
func (d *DB) Close() error { return d.db.Close() }

// Path is the file's path.
func (d *DB) Path() string { return d.path }

// migrate reads the schema version and applies the missing migrations in
// one transaction.
func (d *DB) migrate() error {
	ctx := context.Background()
	tx, err := d.db.BeginTx(ctx, nil)
	if err != nil {
		return d.wrap(err)
	}
	defer tx.Rollback()
	if _, err := tx.Exec(`CREATE TABLE IF NOT EXISTS schema_version (version INTEGER NOT NULL)`); err != nil {
		return d.wrap(err)
	}
	v := 0
	switch err := tx.QueryRow(`SELECT version FROM schema_version`).Scan(&v); {
	case errors.Is(err, sql.ErrNoRows):
		if _, err := tx.Exec(`INSERT INTO schema_version (version) VALUES (0)`); err != nil {
			return d.wrap(err)
		}
	case err != nil:
		return d.wrap(err)
	}
	if v > len(migrations) {
		return pkgerr.Errorf("history", "%s has schema version %d, newer than this huesolve's %d: %w; use the huesolve that wrote it or a newer one",
			d.path, v, len(migrations), ErrNewer)
	}
	if v < 0 {
		return pkgerr.Errorf("history", "%s has schema version %d: %w", d.path, v, ErrDamaged)
	}
	for i := v; i < len(migrations); i++ {
		if _, err := tx.Exec(migrations[i]); err != nil {
			return pkgerr.Errorf("history", "%s: migration to schema version %d: %w", d.path, i+1, d.wrap(err))
		}
	}
	if _, err := tx.Exec(`UPDATE schema_version SET version = ?`, len(migrations)); err != nil {
		return d.wrap(err)
	}
	return d.wrap(tx.Commit())
}

// wrap turns SQLite's busy and not-a-database errors into ErrLocked and
// ErrDamaged naming the file; other errors get the file's name.
func (d *DB) wrap(err error) error {
	if err == nil {
		return nil
	}
	var se *sqlite.Error
	if errors.As(err, &se) {
		switch se.Code() & 0xff {
		case sqlite3.SQLITE_BUSY, sqlite3.SQLITE_LOCKED:
			return pkgerr.Errorf("history", "%s is locked by another process (waited %v): %w; try again when the other run is done", d.path, BusyTimeout, ErrLocked)
		case sqlite3.SQLITE_NOTADB, sqlite3.SQLITE_CORRUPT:
			return pkgerr.Errorf("history", "%s: %w (%s)", d.path, ErrDamaged, strings.TrimSpace(sqlite.ErrorCodeString[se.Code()&0xff]))
		}
	}
	return pkgerr.Errorf("history", "%s: %w", d.path, err)
}

// Check runs SQLite's integrity check and returns ErrDamaged unless it
// says "ok".
func (d *DB) Check() error {
	rows, err := d.db.Query(`PRAGMA integrity_check`)
	if err != nil {
		return d.wrap(err)
	}
	defer rows.Close()
	var msgs []string
	for rows.Next() {
		var s string
		if err := rows.Scan(&s); err != nil {
			return d.wrap(err)
		}
		msgs = append(msgs, s)
	}
	if err := rows.Err(); err != nil {
		return d.wrap(err)
	}
	if len(msgs) != 1 || msgs[0] != "ok" {
		return pkgerr.Errorf("history", "%s: %w: %s", d.path, ErrDamaged, strings.Join(msgs, "; "))
	}
	return nil
}
