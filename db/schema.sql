-- schema.sql: version 1 of the cpdomain store (athletes and trials).
-- Later versions are the numbered migrations beside this file, applied in order.
CREATE TABLE athlete (
    id        INTEGER PRIMARY KEY,
    code      TEXT NOT NULL UNIQUE,          -- short identifier used on the command line
    name      TEXT NOT NULL,
    sport     TEXT NOT NULL DEFAULT 'cycling'
              CHECK (sport IN ('cycling','running','rowing','swimming','other')),
    mass_kg   REAL CHECK (mass_kg IS NULL OR (mass_kg >= 20 AND mass_kg <= 250)),
    notes     TEXT NOT NULL DEFAULT ''
);

CREATE TABLE trial (
    id             INTEGER PRIMARY KEY,
    athlete_id     INTEGER NOT NULL REFERENCES athlete(id) ON DELETE CASCADE,
    date           TEXT NOT NULL,           -- ISO 8601 YYYY-MM-DD
    kind           TEXT NOT NULL CHECK (kind IN ('power','speed','distance')),
    value          REAL NOT NULL,           -- W, m/s or m according to kind
    duration_s     REAL NOT NULL CHECK (duration_s > 0),
    excluded       INTEGER NOT NULL DEFAULT 0 CHECK (excluded IN (0,1)),
    exclude_reason TEXT,
    note           TEXT NOT NULL DEFAULT '',
    source_file    TEXT,                    -- file it was imported from, NULL when typed
    imported_at    TEXT NOT NULL            -- UTC time of the insertion, ISO 8601
);
CREATE INDEX trial_athlete ON trial(athlete_id, date);
