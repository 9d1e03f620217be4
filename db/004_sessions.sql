-- 004_sessions.sql: recorded training and race sessions and 3-minute all-out tests: the file's
-- samples as read (one BLOB per channel), the cleaning report, and each session's mean-maximal
-- curve, computed once at import. The cleaned 1-Hz series is not stored: it is recomputed from the
-- samples by the rules of session.h (with the stored spike_limit) whenever it is needed.
CREATE TABLE session (
    id            INTEGER PRIMARY KEY,
    athlete_id    INTEGER NOT NULL REFERENCES athlete(id) ON DELETE CASCADE,
    kind          TEXT NOT NULL CHECK (kind IN ('session','allout')),
    date          TEXT NOT NULL,               -- ISO 8601 YYYY-MM-DD
    modality      TEXT NOT NULL CHECK (modality IN ('power','speed')),
    content_hash  TEXT NOT NULL,               -- 64-bit FNV-1a of the file's bytes, 16 hex digits
    n_samples     INTEGER NOT NULL CHECK (n_samples >= 2),
    spike_limit   REAL NOT NULL,               -- W or m/s: samples above it were dropped as spikes
    test_start_s  REAL NOT NULL DEFAULT 0,     -- allout: seconds after the first sample where the test began
    -- the cleaning report (session.h), so that listing needs no samples
    elapsed_s     REAL NOT NULL,               -- last sample time minus first
    recorded_s    INTEGER NOT NULL,            -- seconds in segments
    missing_s     INTEGER NOT NULL,            -- seconds in split gaps
    longest_s     INTEGER NOT NULL,            -- longest segment
    n_segments    INTEGER NOT NULL,
    n_dropouts    INTEGER NOT NULL,            -- gaps of more than 1.5 s between samples
    dropout_s     INTEGER NOT NULL,            -- seconds inside them
    filled_s      INTEGER NOT NULL,            -- seconds filled across gaps of up to 5 s
    n_splits      INTEGER NOT NULL,            -- gaps longer than that
    n_spikes      INTEGER NOT NULL,
    spike_max     REAL NOT NULL,               -- highest spike, W or m/s; 0 without spikes
    mean_value    REAL NOT NULL,               -- W or m/s over the recorded seconds
    max_value     REAL NOT NULL,               -- W or m/s, highest clean second
    end_value     REAL,                        -- allout: end power, W; NULL for a session
    work_above_end REAL,                       -- allout: work above end power, J; NULL for a session
    note          TEXT NOT NULL DEFAULT '',
    source_file   TEXT,
    imported_at   TEXT NOT NULL
);
CREATE INDEX session_athlete ON session(athlete_id, kind, date);
-- the duplicate check: an identical file is stored once per athlete and kind
CREATE UNIQUE INDEX session_hash ON session(athlete_id, kind, content_hash);

-- One row per channel: time_s, power_w or speed_m_s, and hr_bpm, cadence_rpm, distance_m when the
-- file has them; n_samples IEEE-754 binary64 values in little-endian order, as in gx_channel.
CREATE TABLE session_channel (
    session_id INTEGER NOT NULL REFERENCES session(id) ON DELETE CASCADE,
    channel    TEXT NOT NULL,
    data       BLOB NOT NULL,
    PRIMARY KEY (session_id, channel)
);

-- The session's mean-maximal curve on the grid of mmp.h: every second from 1 s to fine_s, then
-- every step_s; a curve on another grid is refused when read.
CREATE TABLE session_curve (
    session_id INTEGER PRIMARY KEY REFERENCES session(id) ON DELETE CASCADE,
    n_points   INTEGER NOT NULL,
    fine_s     INTEGER NOT NULL,
    step_s     INTEGER NOT NULL,
    value      BLOB NOT NULL,    -- n_points binary64 LE: best mean W or m/s for each grid duration
    start_s    BLOB NOT NULL     -- n_points binary64 LE: where that effort began, s after the first sample
);
