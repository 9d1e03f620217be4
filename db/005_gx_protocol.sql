-- 005_gx_protocol.sql: gas-exchange files as labs export them. A ramp may be a step test, its end
-- may be given, its nominal rate and start may be left to the recorded intensity, a reviewer may set
-- a threshold as an intensity, and the samples dropped on import (heart-rate artefacts, blank
-- optional cells) are counted.
ALTER TABLE gx_test ADD COLUMN protocol TEXT CHECK (protocol IN ('ramp','steps'));  -- NULL: from the record
ALTER TABLE gx_test ADD COLUMN end_s REAL;             -- file time at which the exercise ended; NULL: from the record
ALTER TABLE gx_test ADD COLUMN get_intensity_manual REAL;  -- a reviewer's GET as W or m/s
ALTER TABLE gx_test ADD COLUMN rcp_intensity_manual REAL;  -- a reviewer's RCP as W or m/s
ALTER TABLE gx_test ADD COLUMN hr_dropped INTEGER NOT NULL DEFAULT 0;   -- heart rates dropped as artefacts
ALTER TABLE gx_test ADD COLUMN blank_cells INTEGER NOT NULL DEFAULT 0;  -- blank optional cells dropped
