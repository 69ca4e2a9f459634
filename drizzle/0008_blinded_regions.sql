ALTER TABLE "analyses" ADD COLUMN "blinded_regions" text[] DEFAULT '{}'::text[] NOT NULL;--> statement-breakpoint
ALTER TABLE "analyses" ADD COLUMN "unblinding_approvals" integer DEFAULT 1 NOT NULL;--> statement-breakpoint
ALTER TABLE "fits" ADD COLUMN "regions_in_fit" text[] DEFAULT '{}'::text[] NOT NULL;--> statement-breakpoint
ALTER TABLE "memberships" ADD COLUMN "role_since" timestamp with time zone DEFAULT now() NOT NULL;--> statement-breakpoint
ALTER TABLE "memberships" ADD COLUMN "granted_by_id" integer;--> statement-breakpoint
ALTER TABLE "memberships" ADD CONSTRAINT "memberships_granted_by_id_users_id_fk" FOREIGN KEY ("granted_by_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
-- Which regions are blinded is decided by the analysis, not by a region's current role: every key
-- that has been a signal region while the analysis was not unblinded is kept in
-- analyses.blinded_regions. A blinded region's role cannot change until unblinding, and a new key
-- given to it is blinded too. (The update of analyses announces "access_changed", drizzle/0003.)
CREATE OR REPLACE FUNCTION keep_blinded_regions() RETURNS trigger AS $$
DECLARE
  state blinding_state;
  blinded text[];
BEGIN
  SELECT a.blinding, a.blinded_regions INTO state, blinded FROM analyses a WHERE a.id = NEW.analysis_id;
  IF state = 'unblinded' THEN
    RETURN NEW;
  END IF;
  IF TG_OP = 'UPDATE' AND OLD.key = ANY(blinded) THEN
    IF NEW.role <> OLD.role THEN
      RAISE EXCEPTION 'region "%" is blinded: its role cannot change before unblinding', OLD.key USING ERRCODE = 'check_violation';
    END IF;
    IF NEW.key <> OLD.key THEN
      UPDATE analyses SET blinded_regions = array_append(blinded_regions, NEW.key::text) WHERE id = NEW.analysis_id AND NOT (NEW.key = ANY(blinded_regions));
    END IF;
  END IF;
  IF NEW.role = 'signal' THEN
    UPDATE analyses SET blinded_regions = array_append(blinded_regions, NEW.key::text) WHERE id = NEW.analysis_id AND NOT (NEW.key = ANY(blinded_regions));
  END IF;
  RETURN NEW;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE TRIGGER regions_keep_blinded BEFORE INSERT OR UPDATE ON regions FOR EACH ROW EXECUTE FUNCTION keep_blinded_regions();
--> statement-breakpoint
-- Analyses blinded today: every key that is, or by the versions and revisions ever was, a signal region.
UPDATE analyses a SET blinded_regions = coalesce((
  SELECT array_agg(DISTINCT k ORDER BY k) FROM (
    SELECT r.key::text AS k FROM regions r WHERE r.analysis_id = a.id AND r.role = 'signal'
    UNION SELECT x->>'key' FROM model_versions v, jsonb_array_elements(v.model->'regions') x WHERE v.analysis_id = a.id AND x->>'role' = 'signal'
    UNION SELECT rv.before->>'key' FROM revisions rv WHERE rv.analysis_id = a.id AND jsonb_typeof(rv.before) = 'object' AND rv.before->>'role' = 'signal'
    UNION SELECT rv.after->>'key' FROM revisions rv WHERE rv.analysis_id = a.id AND jsonb_typeof(rv.after) = 'object' AND rv.after->>'role' = 'signal'
  ) s WHERE k IS NOT NULL), '{}'::text[])
WHERE a.blinding <> 'unblinded';
--> statement-breakpoint
-- Existing members have held their role since they joined, as far as the database knows; those
-- who came through an accepted invitation were granted it by its sender.
UPDATE memberships SET role_since = created_at;
--> statement-breakpoint
UPDATE memberships m SET granted_by_id = i.invited_by_id
FROM invitations i JOIN users u ON lower(u.email) = lower(i.email)
WHERE i.accepted_at IS NOT NULL AND i.analysis_id = m.analysis_id AND u.id = m.user_id;
--> statement-breakpoint
-- The regions each fit reads, by the roles of its version and its options (the engine's rule:
-- signal and control regions, only control ones in a control-only fit, less those left out).
UPDATE fits f SET regions_in_fit = coalesce((
  SELECT array_agg(x->>'key' ORDER BY x->>'key')
  FROM model_versions v, jsonb_array_elements(v.model->'regions') x
  WHERE v.id = f.model_version_id
    AND NOT coalesce(f.options->'excludeRegions', '[]'::jsonb) ? (x->>'key')
    AND (x->>'role' = 'control' OR (x->>'role' = 'signal' AND NOT coalesce((f.options->>'controlOnly')::boolean, false)))
), '{}'::text[]);
