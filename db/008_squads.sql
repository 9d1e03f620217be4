-- 008_squads.sql: squads, the groups a lab keeps its athletes in (a team, a training group). An
-- athlete is in one squad or in none (squad_id NULL). A squad with athletes in it cannot be
-- removed. On a PostgreSQL store the squads are also the unit of access (db/pg/008_squads_access.sql).
CREATE TABLE squad (
    id    INTEGER PRIMARY KEY,
    name  TEXT NOT NULL UNIQUE,
    note  TEXT NOT NULL DEFAULT ''
);
ALTER TABLE athlete ADD COLUMN squad_id INTEGER REFERENCES squad(id) ON DELETE RESTRICT;  -- NULL: no squad
CREATE INDEX athlete_squad ON athlete(squad_id);
