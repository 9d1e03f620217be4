-- 003_gas_exchange.sql: ramp incremental tests and constant-power bouts with their gas-exchange
-- samples, and blood-lactate step tests.
CREATE TABLE gx_test (
    id             INTEGER PRIMARY KEY,
    athlete_id     INTEGER NOT NULL REFERENCES athlete(id) ON DELETE CASCADE,
    kind           TEXT NOT NULL CHECK (kind IN ('ramp','bout')),
    date           TEXT NOT NULL,
    modality       TEXT NOT NULL CHECK (modality IN ('power','speed')),
    rate_per_min   REAL,               -- ramp: W/min or (m/s)/min
    start          REAL,               -- ramp: intensity at onset, W or m/s
    intensity      REAL,               -- bout: the constant W or m/s
    baseline       REAL,               -- intensity before onset, W or m/s; NULL when not given
    onset_s        REAL NOT NULL DEFAULT 0,  -- file time at which the ramp or bout began
    mrt_s          REAL,               -- ramp: MRT given by the user; NULL: estimated from the data
    get_vo2_manual REAL,               -- ramp: a reviewer's GET, mL/min, kept beside the automatic one
    rcp_vo2_manual REAL,               -- ramp: a reviewer's RCP, mL/min
    n_samples      INTEGER NOT NULL,
    note           TEXT NOT NULL DEFAULT '',
    source_file    TEXT,
    imported_at    TEXT NOT NULL
);
CREATE INDEX gx_test_athlete ON gx_test(athlete_id, kind, date);

-- One row per channel: the samples as IEEE-754 binary64 values in little-endian order.
CREATE TABLE gx_channel (
    test_id  INTEGER NOT NULL REFERENCES gx_test(id) ON DELETE CASCADE,
    channel  TEXT NOT NULL,            -- time_s, vo2_ml_min, vco2_ml_min, ve_l_min, hr_bpm, ...
    data     BLOB NOT NULL,
    PRIMARY KEY (test_id, channel)
);

CREATE TABLE lactate_test (
    id          INTEGER PRIMARY KEY,
    athlete_id  INTEGER NOT NULL REFERENCES athlete(id) ON DELETE CASCADE,
    date        TEXT NOT NULL,
    modality    TEXT NOT NULL CHECK (modality IN ('power','speed')),
    note        TEXT NOT NULL DEFAULT '',
    source_file TEXT,
    imported_at TEXT NOT NULL
);
CREATE TABLE lactate_stage (
    test_id        INTEGER NOT NULL REFERENCES lactate_test(id) ON DELETE CASCADE,
    stage          INTEGER NOT NULL,   -- 1, 2, ... in order of intensity
    intensity      REAL NOT NULL,      -- W or m/s
    lactate_mmol_l REAL NOT NULL,
    hr_bpm         REAL,
    stage_s        REAL,
    PRIMARY KEY (test_id, stage)
);
