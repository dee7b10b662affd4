-- Custom migration (drizzle-kit generate --custom): signatures and superseded revisions are never changed.
-- 21 CFR Part 11 §11.70: a signature stays linked to its record and cannot be excised or altered.
CREATE OR REPLACE FUNCTION records_refuse_change() RETURNS trigger AS $$
BEGIN
  RAISE EXCEPTION '% is append-only: % refused', TG_TABLE_NAME, TG_OP USING ERRCODE = 'insufficient_privilege';
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE TRIGGER signatures_no_update BEFORE UPDATE OR DELETE ON signatures
  FOR EACH ROW EXECUTE FUNCTION records_refuse_change();
--> statement-breakpoint
CREATE TRIGGER job_revisions_no_update BEFORE UPDATE OR DELETE ON job_revisions
  FOR EACH ROW EXECUTE FUNCTION records_refuse_change();
