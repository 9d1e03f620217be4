-- 007_compact_samples.sql: session samples and curves in the compact lossless encoding of
-- src/store_codec.h (counts at the file's own resolution, delta coded and zstd-compressed; a 1-Hz
-- time channel is a run of ones with its gaps as exceptions). packed = 1 marks an encoded BLOB,
-- 0 the binary64 layout of 004. Opening a store re-encodes its 004 rows in the same upgrade
-- (store_session.c), so after the upgrade every row is packed; reading still accepts both.
ALTER TABLE session_channel ADD COLUMN packed INTEGER NOT NULL DEFAULT 0 CHECK (packed IN (0, 1));
-- value: packed with the grid durations as weights, so a mean of whole watts is kept as its sum
ALTER TABLE session_curve ADD COLUMN packed INTEGER NOT NULL DEFAULT 0 CHECK (packed IN (0, 1));
