package record

import "strings"

// migration is one schema version: SQL statements applied in order in one
// transaction. Statements use the dialect tokens of dialect.go.
type migration struct {
	version int
	what    string
	steps   []string
}

// migrations lists every schema version in order; a version is never
// edited once released, a change is a new version.
var migrations = []migration{
	{version: 1, what: "runs, specs, unit attempts with steps, metrics and checks", steps: schemaV1},
	{version: 2, what: "lot and shift of each attempt, indexed for trends by lot and station", steps: schemaV2},
}

// latestVersion is the schema version this code reads and writes.
var latestVersion = migrations[len(migrations)-1].version

// In the step table, a metric column that is NULL holds an absent value,
// or one that could not be computed when the unknown column (JSON) gives
// its reason.
var schemaV1 = []string{
	`CREATE TABLE run (
		id {{id}},
		run_at {{time}} NOT NULL,
		tool_version TEXT NOT NULL,
		options TEXT NOT NULL,
		ran_by TEXT NOT NULL,
		report_id TEXT NOT NULL
	)`,
	`CREATE TABLE spec (
		id {{id}},
		spec_id TEXT NOT NULL,
		revision TEXT NOT NULL,
		sha256 TEXT NOT NULL,
		body TEXT NOT NULL,
		UNIQUE (spec_id, revision, sha256)
	)`,
	`CREATE TABLE attempt (
		id {{id}},
		run_id BIGINT NOT NULL REFERENCES run (id),
		spec_ref BIGINT NOT NULL REFERENCES spec (id),
		serial TEXT NOT NULL,
		file_path TEXT NOT NULL,
		file_sha256 TEXT NOT NULL,
		file_mtime {{time}},
		metadata TEXT NOT NULL,
		station TEXT NOT NULL,
		operator TEXT NOT NULL,
		started_at {{time}},
		verdict TEXT NOT NULL,
		reasons TEXT NOT NULL
	)`,
	// The same file content judged under the same spec is one attempt.
	`CREATE UNIQUE INDEX attempt_content ON attempt (file_sha256, spec_ref)`,
	`CREATE INDEX attempt_serial ON attempt (serial, started_at)`,
	`CREATE INDEX attempt_started ON attempt (started_at)`,
	`CREATE INDEX attempt_spec ON attempt (spec_ref, started_at)`,
	`CREATE TABLE step (
		attempt_id BIGINT NOT NULL REFERENCES attempt (id) ON DELETE CASCADE DEFERRABLE INITIALLY DEFERRED,
		step_index INTEGER NOT NULL,
		start_s {{float}} NOT NULL,
		from_level {{float}} NOT NULL,
		to_level {{float}} NOT NULL,
		verdict TEXT NOT NULL,
		reasons TEXT NOT NULL,
		predicted_kind TEXT,
		` + strings.Join(stepMetricColumns(true), ",\n\t\t") + `,
		unknown TEXT,
		PRIMARY KEY (attempt_id, step_index)
	) {{norowid}}`,
	// The metrics without columns in step (see stepMetrics), one row per
	// metric of a step: measured, predicted and gap. A value that is NULL
	// with a NULL reason is absent; NULL with a reason is a value that could
	// not be computed.
	`CREATE TABLE metric (
		attempt_id BIGINT NOT NULL,
		step_index INTEGER NOT NULL,
		name TEXT NOT NULL,
		measured {{float}},
		measured_reason TEXT,
		predicted {{float}},
		predicted_reason TEXT,
		gap {{float}},
		gap_reason TEXT,
		PRIMARY KEY (attempt_id, step_index, name),
		FOREIGN KEY (attempt_id, step_index) REFERENCES step (attempt_id, step_index) ON DELETE CASCADE DEFERRABLE INITIALLY DEFERRED
	) {{norowid}}`,
	`CREATE TABLE step_check (
		attempt_id BIGINT NOT NULL,
		step_index INTEGER NOT NULL,
		position INTEGER NOT NULL,
		metric TEXT NOT NULL,
		value {{float}},
		min_value {{float}},
		max_value {{float}},
		verdict TEXT NOT NULL,
		reason TEXT NOT NULL,
		uncertainty {{float}},
		decision_rule TEXT NOT NULL,
		PRIMARY KEY (attempt_id, step_index, position),
		FOREIGN KEY (attempt_id, step_index) REFERENCES step (attempt_id, step_index) ON DELETE CASCADE DEFERRABLE INITIALLY DEFERRED
	) {{norowid}}`,
}

var schemaV2 = []string{
	`ALTER TABLE attempt ADD COLUMN lot TEXT NOT NULL DEFAULT ''`,
	`ALTER TABLE attempt ADD COLUMN shift TEXT NOT NULL DEFAULT ''`,
	`CREATE INDEX attempt_lot ON attempt (lot, started_at)`,
	`CREATE INDEX attempt_station ON attempt (station, started_at)`,
}
