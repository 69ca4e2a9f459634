-- An entry's page also shows its newest impact check, so a check written or finished announces a
-- change to its entry on "entry_changed" (drizzle/0024). A group renamed announces a change to the
-- entries in it only, not to every entry of the analysis (a group removed sets its entries' group to
-- null, which they announce themselves).
CREATE OR REPLACE FUNCTION announce_entry_change_for_group() RETURNS trigger AS $$
BEGIN
  PERFORM pg_notify('entry_changed', e.analysis_id::text || ':' || e.id::text) FROM entries e WHERE e.group_id = OLD.id;
  RETURN NULL;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE OR REPLACE FUNCTION announce_entry_change_for_check() RETURNS trigger AS $$
BEGIN
  IF TG_OP IN ('UPDATE', 'DELETE') AND OLD.entry_id IS NOT NULL THEN
    PERFORM pg_notify('entry_changed', OLD.analysis_id::text || ':' || OLD.entry_id::text);
  END IF;
  IF TG_OP IN ('INSERT', 'UPDATE') AND NEW.entry_id IS NOT NULL THEN
    PERFORM pg_notify('entry_changed', NEW.analysis_id::text || ':' || NEW.entry_id::text);
  END IF;
  RETURN NULL;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE TRIGGER impact_checks_entry_changed AFTER INSERT OR UPDATE OR DELETE ON impact_checks FOR EACH ROW EXECUTE FUNCTION announce_entry_change_for_check();
