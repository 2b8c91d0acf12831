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
//   - step: one row per step of an attempt, with three columns per step
//     metric stepgate measures (m_NAME measured, p_NAME predicted, g_NAME
//     gap), each a number or NULL, and the reasons of the NULLs that are
//     unknown values in one JSON column;
//   - metric: the same in long form, one row per (attempt, step, name), for
//     metrics without columns of their own (a metric added to stepgate
//     after the schema), until a schema version gives them columns;
//   - step_check: one row per limit check (value, min, max, verdict, and an
//     optional uncertainty and decision rule).
//
// Step metrics live in columns of the step table rather than in a long-form
// table because both ends are paid per row: a run of 5,000 units has 15,000
// steps but 165,000 step metrics, and a trend over 100,000 units reads
// 300,000 step rows instead of 1.2 million metric rows for four metrics.
// Measured in BenchmarkRecordRun5000 and BenchmarkTrend100k, the long form
// cost about 1.4 s of CPU per 5,000 units recorded and about 20 s per trend
// of 100,000 units. The long-form table keeps the schema open to new
// metrics without a migration.
//
// RecordRun writes a whole run in one transaction: an interrupted run (a
// cancelled context, a killed process, a lost connection) leaves the record as
// it was. A busy database (SQLITE_BUSY; PostgreSQL serialization failures,
// deadlocks and lock timeouts) is retried until the store's busy timeout, and
// then reported as an error wrapping ErrBusy.
package record
