//! The schema migrations, in order: migration `i` brings the schema from version `i` to `i + 1`.

/// Migration `i` brings the schema from version `i` to `i + 1`.
pub(super) const MIGRATIONS: &[&str] = &[
    // 1: plant hierarchy, readings and their analysis.
    r"
CREATE TABLE site (
    id INTEGER PRIMARY KEY CHECK (id = 1),
    name TEXT NOT NULL,
    timezone_offset TEXT NOT NULL
);
CREATE TABLE area (
    id INTEGER PRIMARY KEY,
    name TEXT NOT NULL UNIQUE,
    sort_order INTEGER NOT NULL DEFAULT 0
);
CREATE TABLE bearing_type (
    id INTEGER PRIMARY KEY,
    designation TEXT NOT NULL UNIQUE,
    kind TEXT NOT NULL,
    rolling_elements INTEGER,
    element_diameter_mm REAL,
    pitch_diameter_mm REAL,
    contact_angle_deg REAL,
    ftf REAL, bsf REAL, bpfo REAL, bpfi REAL
);
CREATE TABLE machine (
    id INTEGER PRIMARY KEY,
    area_id INTEGER NOT NULL REFERENCES area(id) ON DELETE CASCADE,
    tag TEXT NOT NULL UNIQUE,
    name TEXT NOT NULL,
    kind TEXT NOT NULL,
    nominal_rpm REAL NOT NULL,
    iso_group INTEGER NOT NULL CHECK (iso_group IN (1, 2)),
    iso_support TEXT NOT NULL CHECK (iso_support IN ('rigid', 'flexible')),
    sort_order INTEGER NOT NULL DEFAULT 0
);
CREATE INDEX machine_area ON machine(area_id);
CREATE TABLE bearing_position (
    id INTEGER PRIMARY KEY,
    machine_id INTEGER NOT NULL REFERENCES machine(id) ON DELETE CASCADE,
    position TEXT NOT NULL,
    description TEXT NOT NULL DEFAULT '',
    bearing_type_id INTEGER NOT NULL REFERENCES bearing_type(id),
    lubrication TEXT NOT NULL CHECK (lubrication IN ('grease', 'oil')),
    nominal_rpm REAL,
    sort_order INTEGER NOT NULL DEFAULT 0,
    UNIQUE (machine_id, position)
);
CREATE TABLE bearing_life (
    id INTEGER PRIMARY KEY,
    position_id INTEGER NOT NULL REFERENCES bearing_position(id) ON DELETE CASCADE,
    installed TEXT NOT NULL,
    removed TEXT,
    found_condition TEXT,
    UNIQUE (position_id, installed),
    CHECK (removed IS NULL OR removed >= installed)
);
CREATE TABLE point (
    id INTEGER PRIMARY KEY,
    tag TEXT NOT NULL UNIQUE,
    position_id INTEGER NOT NULL REFERENCES bearing_position(id) ON DELETE CASCADE,
    direction TEXT NOT NULL CHECK (direction IN ('H', 'V', 'A')),
    sensor TEXT NOT NULL,
    sensitivity_mv_per_g REAL,
    sort_order INTEGER NOT NULL DEFAULT 0
);
CREATE INDEX point_position ON point(position_id);
CREATE TABLE reading (
    id INTEGER PRIMARY KEY,
    point_id INTEGER NOT NULL REFERENCES point(id) ON DELETE CASCADE,
    position_id INTEGER NOT NULL REFERENCES bearing_position(id) ON DELETE CASCADE,
    life_id INTEGER REFERENCES bearing_life(id) ON DELETE SET NULL,
    taken_at_utc TEXT NOT NULL,
    utc_offset_s INTEGER NOT NULL,
    route_day TEXT NOT NULL,
    shaft_hz REAL NOT NULL,
    sample_rate_hz REAL NOT NULL,
    units TEXT NOT NULL,
    sample_count INTEGER NOT NULL,
    waveform BLOB,
    source_file TEXT NOT NULL,
    content_sha256 TEXT NOT NULL,
    suspect TEXT,
    clipped_fraction REAL NOT NULL DEFAULT 0,
    imported_at TEXT NOT NULL,
    UNIQUE (content_sha256, point_id, taken_at_utc)
);
CREATE INDEX reading_point_time ON reading(point_id, taken_at_utc);
CREATE INDEX reading_position_time ON reading(position_id, taken_at_utc);
CREATE INDEX reading_life_time ON reading(life_id, taken_at_utc);
CREATE INDEX reading_day ON reading(route_day);
CREATE TABLE analysis (
    reading_id INTEGER PRIMARY KEY REFERENCES reading(id) ON DELETE CASCADE,
    version TEXT NOT NULL,
    document TEXT NOT NULL,
    analyzed_at TEXT NOT NULL
);
CREATE INDEX analysis_version ON analysis(version);
CREATE TABLE reading_scalar (
    reading_id INTEGER NOT NULL REFERENCES reading(id) ON DELETE CASCADE,
    name TEXT NOT NULL,
    value REAL NOT NULL,
    PRIMARY KEY (reading_id, name)
) WITHOUT ROWID;
CREATE INDEX reading_scalar_name ON reading_scalar(name, reading_id);
",
    // 2: outages, replacement plan and the import log.
    r"
CREATE TABLE outage (
    id INTEGER PRIMARY KEY,
    name TEXT NOT NULL UNIQUE,
    start_date TEXT NOT NULL,
    end_date TEXT NOT NULL,
    CHECK (end_date >= start_date)
);
CREATE TABLE outage_area (
    outage_id INTEGER NOT NULL REFERENCES outage(id) ON DELETE CASCADE,
    area_id INTEGER NOT NULL REFERENCES area(id) ON DELETE CASCADE,
    PRIMARY KEY (outage_id, area_id)
) WITHOUT ROWID;
CREATE TABLE outage_machine (
    outage_id INTEGER NOT NULL REFERENCES outage(id) ON DELETE CASCADE,
    machine_id INTEGER NOT NULL REFERENCES machine(id) ON DELETE CASCADE,
    PRIMARY KEY (outage_id, machine_id)
) WITHOUT ROWID;
CREATE TABLE plan_entry (
    id INTEGER PRIMARY KEY,
    life_id INTEGER NOT NULL REFERENCES bearing_life(id) ON DELETE CASCADE,
    outage_id INTEGER NOT NULL REFERENCES outage(id) ON DELETE CASCADE,
    status TEXT NOT NULL CHECK (status IN ('planned', 'done', 'cancelled')),
    note TEXT NOT NULL DEFAULT '',
    UNIQUE (life_id, outage_id)
);
CREATE INDEX plan_entry_outage ON plan_entry(outage_id);
CREATE TABLE import_run (
    id INTEGER PRIMARY KEY,
    folder TEXT NOT NULL,
    started_at TEXT NOT NULL,
    finished_at TEXT,
    new_readings INTEGER NOT NULL DEFAULT 0,
    duplicates INTEGER NOT NULL DEFAULT 0,
    rejected INTEGER NOT NULL DEFAULT 0
);
CREATE TABLE import_log (
    id INTEGER PRIMARY KEY,
    run_id INTEGER NOT NULL REFERENCES import_run(id) ON DELETE CASCADE,
    file TEXT NOT NULL,
    point TEXT,
    outcome TEXT NOT NULL CHECK (outcome IN ('imported', 'duplicate', 'rejected')),
    reason TEXT,
    reading_id INTEGER REFERENCES reading(id) ON DELETE SET NULL
);
CREATE INDEX import_log_outcome ON import_log(outcome, run_id);
",
    // 3: stage calls, one per reading, with their evidence as JSON.
    r"
CREATE TABLE stage_call (
    reading_id INTEGER PRIMARY KEY REFERENCES reading(id) ON DELETE CASCADE,
    stage INTEGER NOT NULL CHECK (stage BETWEEN 0 AND 4),
    version TEXT NOT NULL,
    evidence TEXT NOT NULL,
    called_at TEXT NOT NULL
);
",
    // 4: the latest stage call of a position without scanning its readings: the call carries its
    // reading's position and time (a reading's point and time never change).
    r"
ALTER TABLE stage_call ADD COLUMN position_id INTEGER;
ALTER TABLE stage_call ADD COLUMN taken_at_utc TEXT;
UPDATE stage_call SET
    position_id = (SELECT r.position_id FROM reading r WHERE r.id = stage_call.reading_id),
    taken_at_utc = (SELECT r.taken_at_utc FROM reading r WHERE r.id = stage_call.reading_id);
CREATE INDEX stage_call_position_time ON stage_call(position_id, taken_at_utc);
",
    // 5: one vocabulary for stored results.
    // - The diagnosis label gets its own column, so the store never reads inside the analyzer's
    //   document. Existing analyses do not have it: they are marked stale (their version gets a
    //   suffix), so `Store::reanalyze_stale` recomputes them and fills the column.
    // - One set of trend-scalar names: the analyzer used to store each stage indicator twice (a flat
    //   name and a `stage.` name). Flat names with a `stage.` twin are renamed where the twin is missing
    //   and dropped otherwise; the other flat names of the analyzer become `stage.` names too.
    // - Stage calls written by the stage runner (`{"call":..,"forecast":..,"point":..}`) are rewritten
    //   into the versioned stage record by adding `"schema_version":1` (the only difference); calls of
    //   any other shape are left as they are and read as "no record" (their stage number still shows).
    r#"
ALTER TABLE analysis ADD COLUMN diagnosis TEXT;
UPDATE analysis SET version = version || '+before-diagnosis-column';
UPDATE OR IGNORE reading_scalar SET name = 'stage.' || name
    WHERE name IN ('accel_rms_g', 'accel_peak_g', 'crest_factor', 'kurtosis', 'velocity_rms_mm_s',
                   'noise_floor_g');
UPDATE OR IGNORE reading_scalar SET name = 'stage.one_x_amplitude' WHERE name = 'one_x_velocity_rms_mm_s';
UPDATE OR IGNORE reading_scalar SET name = 'stage.band.' || substr(name, 6)
    WHERE name LIKE 'band\_%\_rms\_g' ESCAPE '\';
DELETE FROM reading_scalar
    WHERE name IN ('accel_rms_g', 'accel_peak_g', 'crest_factor', 'kurtosis', 'velocity_rms_mm_s',
                   'noise_floor_g', 'one_x_velocity_rms_mm_s', 'iso_zone_index', 'envelope_score_db',
                   'envelope_harmonics', 'linear_defect_harmonics', 'linear_sidebands')
       OR name LIKE 'band\_%\_rms\_g' ESCAPE '\'
       OR name LIKE 'envelope\_%\_score\_db' ESCAPE '\';
UPDATE stage_call SET evidence = '{"schema_version":1,' || substr(evidence, 2)
    WHERE evidence LIKE '{"call":%' AND evidence NOT LIKE '%"schema_version":%';
"#,
    // 6: the analyst's own records: notes on a bearing or one of its readings (observations,
    // lubrication and maintenance events), and readings marked as a life's baseline. A change of the
    // marks is dated per position, so the position's stage calls go stale and are recomputed.
    r"
CREATE TABLE note (
    id INTEGER PRIMARY KEY,
    position_id INTEGER NOT NULL REFERENCES bearing_position(id) ON DELETE CASCADE,
    reading_id INTEGER REFERENCES reading(id) ON DELETE CASCADE,
    on_day TEXT NOT NULL,
    kind TEXT NOT NULL CHECK (kind IN ('observation', 'lubrication', 'maintenance')),
    text TEXT NOT NULL CHECK (length(text) BETWEEN 1 AND 2000),
    created_at TEXT NOT NULL
);
CREATE INDEX note_position ON note(position_id, on_day);
CREATE TABLE baseline_mark (
    reading_id INTEGER PRIMARY KEY REFERENCES reading(id) ON DELETE CASCADE,
    marked_at TEXT NOT NULL
);
CREATE TABLE baseline_change (
    position_id INTEGER PRIMARY KEY REFERENCES bearing_position(id) ON DELETE CASCADE,
    changed_at TEXT NOT NULL
);
",
    // 7: waveforms in a table of their own, the blob as the row's last column. SQLite writes a
    // trailing zero-filled blob without building it in memory, and the import then fills it in
    // blocks through incremental blob I/O, so a long recording is not copied whole while stored.
    r"
CREATE TABLE waveform (
    reading_id INTEGER PRIMARY KEY REFERENCES reading(id) ON DELETE CASCADE,
    samples BLOB NOT NULL
);
INSERT INTO waveform (reading_id, samples)
    SELECT id, waveform FROM reading WHERE waveform IS NOT NULL;
ALTER TABLE reading DROP COLUMN waveform;
",
];
