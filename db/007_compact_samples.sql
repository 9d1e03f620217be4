-- 007_compact_samples.sql: session samples and curves in the compact lossless encoding of
-- src/store_codec.h (counts at the file's own resolution, delta coded and zstd-compressed; a 1-Hz
-- time channel is a run of ones with its gaps as exceptions). packed = 1 marks an encoded BLOB,
-- 0 the binary64 layout of 004. Opening a store re-encodes its 004 rows in the same upgrade
-- (store_session.c), so after the upgrade every row is packed; reading still accepts both.
ALTER TABLE session_channel ADD COLUMN packed INTEGER NOT NULL DEFAULT 0 CHECK (packed IN (0, 1));
-- value: packed with the grid durations as weights, so a mean of whole watts is kept as its sum
ALTER TABLE session_curve ADD COLUMN packed INTEGER NOT NULL DEFAULT 0 CHECK (packed IN (0, 1));
-- The season curve of each athlete and modality over all their sessions, kept current by every
-- session add and remove (store_session.c), so that 'curve' without --from/--to reads one row
-- instead of every session's curve. Derived data: a store without the row computes the curve
-- from the sessions' curves, as before. The four series are packed as above (value with the grid
-- durations as weights; session ids and dates as whole numbers, dates in days since 1970-01-01).
CREATE TABLE session_season (
    athlete_id INTEGER NOT NULL REFERENCES athlete(id) ON DELETE CASCADE,
    modality   TEXT NOT NULL CHECK (modality IN ('power','speed')),
    n_sessions INTEGER NOT NULL,
    n_points   INTEGER NOT NULL,
    value      BLOB NOT NULL,
    start_s    BLOB NOT NULL,
    session    BLOB NOT NULL,
    date_days  BLOB NOT NULL,
    PRIMARY KEY (athlete_id, modality)
);
