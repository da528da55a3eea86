-- Row-level security for the raw upload files kept in the database (extract_files), as
-- for the columns of the same version (003_extracts.sql): every member of the initiative
-- may read at the database level (the application decides who may download, as for the
-- row preview, and records every download), only its analysts insert, and nobody
-- changes or deletes a chunk: a stored version never changes.

ALTER TABLE extract_files ENABLE ROW LEVEL SECURITY;
ALTER TABLE extract_files FORCE ROW LEVEL SECURITY;
DROP POLICY IF EXISTS extract_files_read ON extract_files;
CREATE POLICY extract_files_read ON extract_files FOR SELECT
  USING (initiative_id IN (SELECT app_member_initiative_ids()));
DROP POLICY IF EXISTS extract_files_insert ON extract_files;
CREATE POLICY extract_files_insert ON extract_files FOR INSERT
  WITH CHECK (initiative_id IN (SELECT app_analyst_initiative_ids()));
GRANT SELECT, INSERT ON extract_files TO {{app_role}};
