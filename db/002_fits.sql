-- 002_fits.sql: every power-duration fit the 'fit' command makes, with the trials it used,
-- so the season history can show it later.
CREATE TABLE fit_run (
    id           INTEGER PRIMARY KEY,
    athlete_id   INTEGER NOT NULL REFERENCES athlete(id) ON DELETE CASCADE,
    created_at   TEXT NOT NULL,                 -- UTC, ISO 8601
    source       TEXT NOT NULL CHECK (source IN ('trials','curve')),
    modality     TEXT NOT NULL CHECK (modality IN ('power','speed')),
    date_from    TEXT NOT NULL,                 -- first and last date of the data used
    date_to      TEXT NOT NULL,
    n            INTEGER NOT NULL,              -- trials (or curve points) used
    best         TEXT,                          -- best model name, NULL when none qualifies
    flags        TEXT NOT NULL DEFAULT '',      -- the fit's flag names, comma-separated
    tool_version TEXT NOT NULL
);
CREATE INDEX fit_run_athlete ON fit_run(athlete_id, date_to);

CREATE TABLE fit_model (
    run_id          INTEGER NOT NULL REFERENCES fit_run(id) ON DELETE CASCADE,
    model           TEXT NOT NULL,
    ok              INTEGER NOT NULL CHECK (ok IN (0,1)),
    cp              REAL,    -- W or m/s; NULL when the model failed
    cp_se           REAL,    -- NULL without standard errors
    w_prime         REAL,    -- J or m
    w_prime_se      REAL,
    p_max           REAL,    -- three-parameter only
    p_max_se        REAL,
    detail          TEXT NOT NULL,  -- the model's whole JSON output, as 'fit --json' prints it
    PRIMARY KEY (run_id, model)
);

CREATE TABLE fit_trial (
    run_id   INTEGER NOT NULL REFERENCES fit_run(id) ON DELETE CASCADE,
    trial_id INTEGER NOT NULL,   -- no foreign key: the record of a fit outlives a removed trial
    PRIMARY KEY (run_id, trial_id)
);
