package record

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"strings"
	"sync"
	"testing"
	"time"
)

// Several stores (as several stations or processes would) record runs into
// one database at once; every unit is recorded exactly once.
func TestConcurrentWriters(t *testing.T) {
	eachBackend(t, func(t *testing.T, b backend) {
		dsn := b.fresh(t)
		open(t, dsn) // migrate once, so that the writers race on data, not schema
		const writers, runs, perRun = 4, 6, 5
		var wg sync.WaitGroup
		errs := make(chan error, writers*runs)
		for w := range writers {
			wg.Add(1)
			go func() {
				defer wg.Done()
				s, err := Open(context.Background(), dsn)
				if err != nil {
					errs <- err
					return
				}
				defer s.Close()
				for r := range runs {
					var units []Unit
					for i := range perRun {
						units = append(units, testUnit(fmt.Sprintf("SN-W%d", w), r*perRun+i, t0.Add(time.Duration(i)*time.Minute)))
					}
					// Every writer also offers one unit that all writers share.
					units = append(units, testUnit("SN-SHARED", r, t0))
					if _, err := s.RecordRun(context.Background(), testRun(t0), testSpec("A"), units); err != nil {
						errs <- err
					}
				}
			}()
		}
		wg.Wait()
		close(errs)
		for err := range errs {
			t.Errorf("writer: %v", err)
		}
		c := counts(t, open(t, dsn))
		if want := writers*runs*perRun + runs; c["attempt"] != want || c["run"] != writers*runs {
			t.Errorf("after concurrent writers: %v, want %d attempts and %d runs", c, want, writers*runs)
		}
	})
}

// holdWriteLock takes the database's write lock (SQLite) or an exclusive
// lock on the attempt table (PostgreSQL) from another connection, and
// releases it when the returned function is called.
func holdWriteLock(t *testing.T, b backend, dsn string) (release func()) {
	t.Helper()
	driver, lock := "sqlite", "BEGIN IMMEDIATE"
	if b.name == "postgres" {
		driver, lock = "pgx", "BEGIN; LOCK TABLE attempt IN ACCESS EXCLUSIVE MODE"
	}
	db, err := sql.Open(driver, dsn)
	if err != nil {
		t.Fatal(err)
	}
	conn, err := db.Conn(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	for _, q := range strings.Split(lock, "; ") {
		if _, err := conn.ExecContext(context.Background(), q); err != nil {
			t.Fatal(err)
		}
	}
	var once sync.Once
	return func() {
		once.Do(func() {
			conn.ExecContext(context.Background(), "ROLLBACK")
			conn.Close()
			db.Close()
		})
	}
}

// A writer that finds the database locked by another writer waits and
// tries again (SQLITE_BUSY; PostgreSQL's lock_timeout) until its busy
// timeout; past it, it gives up with an error wrapping ErrBusy and writes
// nothing.
func TestBusyRetry(t *testing.T) {
	eachBackend(t, func(t *testing.T, b backend) {
		dsn := b.fresh(t)
		open(t, dsn)
		ctx := context.Background()
		cases := []struct {
			name    string
			hold    time.Duration
			timeout time.Duration
			wantErr bool
		}{
			{"lock released within the timeout", 1500 * time.Millisecond, 10 * time.Second, false},
			{"lock held past the timeout", 3 * time.Second, 400 * time.Millisecond, true},
		}
		for i, c := range cases {
			s, err := OpenWith(ctx, dsn, Options{BusyTimeout: c.timeout})
			if err != nil {
				t.Fatal(err)
			}
			release := holdWriteLock(t, b, dsn)
			timer := time.AfterFunc(c.hold, release)
			start := time.Now()
			res, err := s.RecordRun(ctx, testRun(t0), testSpec("A"), []Unit{testUnit("SN-B", i, t0)})
			took := time.Since(start)
			timer.Stop()
			release()
			switch {
			case c.wantErr && !errors.Is(err, ErrBusy):
				t.Errorf("%s: err = %v, want ErrBusy", c.name, err)
			case c.wantErr && (took < c.timeout || took > c.hold):
				t.Errorf("%s: gave up after %v, want between %v and %v", c.name, took, c.timeout, c.hold)
			case !c.wantErr && (err != nil || res.Recorded != 1):
				t.Errorf("%s: %+v, %v", c.name, res, err)
			case !c.wantErr && took < c.hold:
				t.Errorf("%s: recorded after %v while the lock was held for %v", c.name, took, c.hold)
			}
			if c.wantErr && err != nil {
				t.Logf("the error a user sees: %v", err)
			}
			s.Close()
		}
		if c := counts(t, open(t, dsn)); c["attempt"] != 1 || c["run"] != 1 {
			t.Errorf("rows after the busy cases: %v, want 1 run and 1 attempt", c)
		}
	})
}

// Stations starting together on a new record migrate it once.
func TestConcurrentOpen(t *testing.T) {
	eachBackend(t, func(t *testing.T, b backend) {
		dsn := b.fresh(t)
		const n = 4
		var wg sync.WaitGroup
		errs := make(chan error, n)
		for range n {
			wg.Add(1)
			go func() {
				defer wg.Done()
				s, err := Open(context.Background(), dsn)
				if err != nil {
					errs <- err
					return
				}
				s.Close()
			}()
		}
		wg.Wait()
		close(errs)
		for err := range errs {
			t.Errorf("concurrent Open: %v", err)
		}
		s := open(t, dsn)
		var rows int
		if err := s.db.QueryRow("SELECT COUNT(*) FROM schema_version").Scan(&rows); err != nil || rows != len(migrations) {
			t.Errorf("schema_version has %d rows (%v), want %d", rows, err, len(migrations))
		}
	})
}
