package record

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"net/url"
	"time"
)

// ErrBusy is wrapped by the error of a write that found the database busy
// (held by another writer) for longer than the store's busy timeout.
var ErrBusy = errors.New("database busy")

// DefaultBusyTimeout is how long a write waits for a busy database before
// it gives up.
const DefaultBusyTimeout = 30 * time.Second

// Options tune a Store.
type Options struct {
	// BusyTimeout is how long a write keeps trying while another writer
	// holds the database; 0 means DefaultBusyTimeout.
	BusyTimeout time.Duration
}

// Store is an open line record. It is safe for concurrent use.
type Store struct {
	db   *sql.DB
	d    dialect
	busy time.Duration

	// afterUnit, when set (by tests), is called inside RecordRun's
	// transaction after each unit is written.
	afterUnit func(i int)
}

// Open opens the record named by dsn, creating it when it is a SQLite file
// that does not exist yet, and applies the schema migrations it lacks. dsn is
// a file path (SQLite) or a postgres:// or postgresql:// URL (PostgreSQL).
func Open(ctx context.Context, dsn string) (*Store, error) {
	return OpenWith(ctx, dsn, Options{})
}

// OpenWith is Open with options.
func OpenWith(ctx context.Context, dsn string, o Options) (*Store, error) {
	if o.BusyTimeout <= 0 {
		o.BusyTimeout = DefaultBusyTimeout
	}
	d, driverDSN, err := dialectFor(dsn, o.BusyTimeout)
	if err != nil {
		return nil, err
	}
	db, err := sql.Open(d.driver, driverDSN)
	if err != nil {
		return nil, fmt.Errorf("record: opening %s: %w", redact(dsn), err)
	}
	if err := db.PingContext(ctx); err != nil {
		db.Close()
		return nil, fmt.Errorf("record: cannot open %s: %w", redact(dsn), err)
	}
	s := &Store{db: db, d: d, busy: o.BusyTimeout}
	if _, err := s.migrate(ctx, latestVersion); err != nil {
		db.Close()
		return nil, fmt.Errorf("record: opening %s: %w", redact(dsn), err)
	}
	return s, nil
}

// openAt opens a store and migrates it only up to version target (tests of
// migrations between versions).
func openAt(ctx context.Context, dsn string, target int) (*Store, error) {
	d, driverDSN, err := dialectFor(dsn, DefaultBusyTimeout)
	if err != nil {
		return nil, err
	}
	db, err := sql.Open(d.driver, driverDSN)
	if err != nil {
		return nil, err
	}
	s := &Store{db: db, d: d, busy: DefaultBusyTimeout}
	if _, err := s.migrate(ctx, target); err != nil {
		db.Close()
		return nil, err
	}
	return s, nil
}

// Close closes the record.
func (s *Store) Close() error {
	if err := s.db.Close(); err != nil {
		return fmt.Errorf("record: closing: %w", err)
	}
	return nil
}

// Backend names the database behind the store: "sqlite" or "postgres".
func (s *Store) Backend() string { return s.d.name }

// redact gives a DSN fit for an error message: a URL's password is hidden.
func redact(dsn string) string {
	u, err := url.Parse(dsn)
	if err != nil || u.Scheme == "" || u.User == nil {
		return dsn
	}
	return u.Redacted()
}

// inTx runs fn in a transaction and commits it. A busy database is tried
// again, with growing pauses, until the busy timeout; then the error wraps
// ErrBusy. Any other error rolls the transaction back and is returned.
func (s *Store) inTx(ctx context.Context, fn func(*sql.Tx) error) error {
	deadline := time.Now().Add(s.busy)
	pause := 5 * time.Millisecond
	for tries := 1; ; tries++ {
		err := s.tryTx(ctx, fn)
		if err == nil || !isBusy(err) {
			return err
		}
		left := time.Until(deadline)
		if left <= 0 {
			word := "tries"
			if tries == 1 {
				word = "try"
			}
			return fmt.Errorf("%w: another writer held it for %v (%d %s): %v", ErrBusy, s.busy, tries, word, err)
		}
		select {
		case <-ctx.Done():
			return fmt.Errorf("waiting for a busy database: %w", ctx.Err())
		case <-time.After(min(pause, left)):
		}
		pause = min(2*pause, 250*time.Millisecond)
	}
}

func (s *Store) tryTx(ctx context.Context, fn func(*sql.Tx) error) error {
	tx, err := s.db.BeginTx(ctx, nil)
	if err != nil {
		return fmt.Errorf("beginning a transaction: %w", err)
	}
	if err := fn(tx); err != nil {
		tx.Rollback()
		return err
	}
	if err := tx.Commit(); err != nil {
		return fmt.Errorf("committing: %w", err)
	}
	return nil
}
