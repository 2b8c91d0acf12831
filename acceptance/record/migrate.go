package record

import (
	"context"
	"database/sql"
	"fmt"
	"time"
)

const createVersionTable = `CREATE TABLE IF NOT EXISTS schema_version (
	version INTEGER PRIMARY KEY,
	applied_at {{time}} NOT NULL,
	description TEXT NOT NULL
)`

// SchemaVersion returns the schema version of the open record.
func (s *Store) SchemaVersion(ctx context.Context) (int, error) {
	var v sql.NullInt64
	err := s.db.QueryRowContext(ctx, "SELECT MAX(version) FROM schema_version").Scan(&v)
	if err != nil {
		return 0, fmt.Errorf("record: reading the schema version: %w", err)
	}
	return int(v.Int64), nil
}

// migrate brings the schema up to version target, one version per
// transaction, and returns the version it leaves.
func (s *Store) migrate(ctx context.Context, target int) (int, error) {
	if v, err := s.SchemaVersion(ctx); err == nil && v == target {
		return v, nil // the common case: nothing to do, no write lock taken
	}
	for {
		var v int
		var applied bool
		err := s.inTx(ctx, func(tx *sql.Tx) error {
			var err error
			v, applied, err = s.migrateOne(ctx, tx, target)
			return err
		})
		if err != nil {
			return v, err
		}
		if !applied {
			return v, nil
		}
	}
}

// migrateOne applies the next version after the current one, when the
// current one is below target. It reads the version inside the transaction,
// after taking the migration lock, so that concurrent openers apply each
// version once.
func (s *Store) migrateOne(ctx context.Context, tx *sql.Tx, target int) (int, bool, error) {
	if s.d.lockStmt != "" {
		if _, err := tx.ExecContext(ctx, s.d.lockStmt); err != nil {
			return 0, false, fmt.Errorf("locking for migration: %w", err)
		}
	}
	if _, err := tx.ExecContext(ctx, s.d.render(createVersionTable)); err != nil {
		return 0, false, fmt.Errorf("creating schema_version: %w", err)
	}
	var cur sql.NullInt64
	if err := tx.QueryRowContext(ctx, "SELECT MAX(version) FROM schema_version").Scan(&cur); err != nil {
		return 0, false, fmt.Errorf("reading the schema version: %w", err)
	}
	v := int(cur.Int64)
	if v > latestVersion {
		return v, false, fmt.Errorf("the database has schema version %d, newer than this stepgate knows (%d): use a newer stepgate", v, latestVersion)
	}
	if v >= target {
		return v, false, nil
	}
	m := migrations[v] // versions are 1, 2, ... in order
	for i, q := range m.steps {
		if _, err := tx.ExecContext(ctx, s.d.render(q)); err != nil {
			return v, false, fmt.Errorf("migration to version %d (%s), statement %d: %w", m.version, m.what, i+1, err)
		}
	}
	_, err := tx.ExecContext(ctx, s.d.render("INSERT INTO schema_version (version, applied_at, description) VALUES (?, ?, ?)"),
		m.version, s.d.timeArg(time.Now()), m.what)
	if err != nil {
		return v, false, fmt.Errorf("noting schema version %d: %w", m.version, err)
	}
	return m.version, true, nil
}
