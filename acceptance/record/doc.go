// Package record owns the line record: every judged unit kept in a database
// across runs, so that retests, first-pass yield and trends over weeks can be
// computed from it.
//
// The record lives either in an embedded SQLite file (a DSN that is a file
// path; the pure-Go driver modernc.org/sqlite, no cgo) or in a PostgreSQL
// database shared by the stations of a plant (a postgres:// or postgresql://
// URL; github.com/jackc/pgx/v5 through its database/sql adapter). Both use
// one schema, written once in schema.go; the few places where the two SQL
// dialects differ (placeholders, identity columns, column types, locking and
// which errors mean "busy, try again") are kept in dialect.go.
//
// The schema is versioned: Open applies the migrations the database lacks,
// each version in its own transaction, and records them in schema_version.
//
// The package has its own plain row types (Run, Spec, Unit, Step, Metric,
// Check, Prediction) and does not import the rest of stepgate: the batch maps
// its results onto these types. What is stored:
//
//   - run: one row per recording run (time, tool version, options as JSON,
//     who ran it, report id);
//   - spec: one row per (spec id, revision, SHA-256) with the spec's text;
//   - attempt: one row per unit attempt (serial, file, file SHA-256, file
//     time, metadata, station, operator, lot, shift, start time, verdict,
//     reasons); the same file content judged under the same spec is recorded
//     once (RecordRun skips it and says so);
//   - step: one row per step of an attempt;
//   - metric: one row per (attempt, step, metric name), long form, holding
//     the measured value, the predicted value and the gap, each a number or
//     NULL with its reason;
//   - step_check: one row per limit check (value, min, max, verdict, and an
//     optional uncertainty and decision rule).
//
// Metrics are stored in long form rather than one column per metric because
// the set of metrics belongs to the metrics package and grows: a new metric
// needs no migration, a trend reads one metric by its name through the
// primary key (attempt, step, name), and measured, predicted and gap values
// of the same metric share one row instead of three.
//
// RecordRun writes a whole run in one transaction: an interrupted run (a
// cancelled context, a killed process, a lost connection) leaves the record as
// it was. A busy database (SQLITE_BUSY; PostgreSQL serialization failures,
// deadlocks and lock timeouts) is retried until the store's busy timeout, and
// then reported as an error wrapping ErrBusy.
package record
