-- Custom migration (drizzle-kit generate --custom): the frozen record of a revision that a lead
-- has approved is never changed or removed (a resubmission after a return may replace it).
-- 21 CFR Part 11 §11.70: the signature stays linked to the record it signed.
CREATE OR REPLACE FUNCTION record_snapshots_refuse_signed_change() RETURNS trigger AS $$
BEGIN
  IF EXISTS (SELECT 1 FROM signatures s WHERE s.job_id = OLD.job_id AND s.revision = OLD.revision AND s.decision = 'approve') THEN
    RAISE EXCEPTION 'record_snapshots: revision % of job % is approved; % refused', OLD.revision, OLD.job_id, TG_OP USING ERRCODE = 'insufficient_privilege';
  END IF;
  IF TG_OP = 'DELETE' THEN
    RETURN OLD;
  END IF;
  RETURN NEW;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE TRIGGER record_snapshots_signed_frozen BEFORE UPDATE OR DELETE ON record_snapshots
  FOR EACH ROW EXECUTE FUNCTION record_snapshots_refuse_signed_change();
