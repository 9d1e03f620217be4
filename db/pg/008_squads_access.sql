-- pg/008_squads_access.sql: PostgreSQL only, run after the portable 008_squads.sql. Who sees which
-- athletes. A row of cpd_squad_grant lets the members of a database role see and change the
-- athletes of one squad (squad_id NULL: of every squad, and the athletes in none); row-level
-- security on athlete and on every table that holds an athlete's data applies it to each row.
-- The store's owner (the administrator who ran init) is not subject to row-level security (the
-- tables are not FORCEd) and sees everything. 'cpdomain server setup' makes the group roles and
-- their table privileges; 'cpdomain squad grant|revoke' edits the grants.
CREATE TABLE cpd_squad_grant (
    squad_id  BIGINT REFERENCES squad(id) ON DELETE CASCADE,  -- NULL: every squad
    role_name TEXT NOT NULL                                   -- a role's name, not its oid: a dropped role simply matches nobody
);
CREATE UNIQUE INDEX cpd_squad_grant_one ON cpd_squad_grant ((COALESCE(squad_id, 0)), role_name);

-- An athlete is visible (and may be written) when a grant for its squad, or for every squad,
-- names a role the current user is a member of. The role is looked up by name in pg_roles, so a
-- grant to a role dropped since matches no row and raises no error (pg_has_role with a name
-- would). The reading roles need SELECT on cpd_squad_grant ('server setup' grants it); nobody but
-- the owner may write it.
ALTER TABLE athlete ENABLE ROW LEVEL SECURITY;
CREATE POLICY cpd_squad ON athlete
    USING (EXISTS (SELECT 1 FROM cpd_squad_grant g JOIN pg_roles r ON r.rolname = g.role_name
                   WHERE (g.squad_id IS NULL OR g.squad_id = athlete.squad_id)
                     AND pg_has_role(current_user, r.oid, 'MEMBER')))
    WITH CHECK (EXISTS (SELECT 1 FROM cpd_squad_grant g JOIN pg_roles r ON r.rolname = g.role_name
                        WHERE (g.squad_id IS NULL OR g.squad_id = athlete.squad_id)
                          AND pg_has_role(current_user, r.oid, 'MEMBER')));

-- The athlete's data, through its parent: the subqueries are themselves filtered by the policies.
ALTER TABLE trial ENABLE ROW LEVEL SECURITY;
CREATE POLICY cpd_squad ON trial
    USING (athlete_id IN (SELECT id FROM athlete)) WITH CHECK (athlete_id IN (SELECT id FROM athlete));
ALTER TABLE fit_run ENABLE ROW LEVEL SECURITY;
CREATE POLICY cpd_squad ON fit_run
    USING (athlete_id IN (SELECT id FROM athlete)) WITH CHECK (athlete_id IN (SELECT id FROM athlete));
ALTER TABLE fit_model ENABLE ROW LEVEL SECURITY;
CREATE POLICY cpd_squad ON fit_model
    USING (run_id IN (SELECT id FROM fit_run)) WITH CHECK (run_id IN (SELECT id FROM fit_run));
ALTER TABLE fit_trial ENABLE ROW LEVEL SECURITY;
CREATE POLICY cpd_squad ON fit_trial
    USING (run_id IN (SELECT id FROM fit_run)) WITH CHECK (run_id IN (SELECT id FROM fit_run));
ALTER TABLE gx_test ENABLE ROW LEVEL SECURITY;
CREATE POLICY cpd_squad ON gx_test
    USING (athlete_id IN (SELECT id FROM athlete)) WITH CHECK (athlete_id IN (SELECT id FROM athlete));
ALTER TABLE gx_channel ENABLE ROW LEVEL SECURITY;
CREATE POLICY cpd_squad ON gx_channel
    USING (test_id IN (SELECT id FROM gx_test)) WITH CHECK (test_id IN (SELECT id FROM gx_test));
ALTER TABLE lactate_test ENABLE ROW LEVEL SECURITY;
CREATE POLICY cpd_squad ON lactate_test
    USING (athlete_id IN (SELECT id FROM athlete)) WITH CHECK (athlete_id IN (SELECT id FROM athlete));
ALTER TABLE lactate_stage ENABLE ROW LEVEL SECURITY;
CREATE POLICY cpd_squad ON lactate_stage
    USING (test_id IN (SELECT id FROM lactate_test)) WITH CHECK (test_id IN (SELECT id FROM lactate_test));
ALTER TABLE session ENABLE ROW LEVEL SECURITY;
CREATE POLICY cpd_squad ON session
    USING (athlete_id IN (SELECT id FROM athlete)) WITH CHECK (athlete_id IN (SELECT id FROM athlete));
ALTER TABLE session_channel ENABLE ROW LEVEL SECURITY;
CREATE POLICY cpd_squad ON session_channel
    USING (session_id IN (SELECT id FROM session)) WITH CHECK (session_id IN (SELECT id FROM session));
ALTER TABLE session_curve ENABLE ROW LEVEL SECURITY;
CREATE POLICY cpd_squad ON session_curve
    USING (session_id IN (SELECT id FROM session)) WITH CHECK (session_id IN (SELECT id FROM session));
ALTER TABLE session_season ENABLE ROW LEVEL SECURITY;
CREATE POLICY cpd_squad ON session_season
    USING (athlete_id IN (SELECT id FROM athlete)) WITH CHECK (athlete_id IN (SELECT id FROM athlete));
