-- The binned model (regions, processes, floating normalisations, templates) and the register's
-- summary of each entry's effects are kept in memory per analysis. These triggers announce every
-- change to them on the channel "model_changed" with the analysis id, at commit; the server drops
-- its copies on hearing it. (Effects also announce "register_changed", from drizzle/0002.)
CREATE OR REPLACE FUNCTION announce_model_change() RETURNS trigger AS $$
BEGIN
  IF TG_OP IN ('UPDATE', 'DELETE') THEN
    PERFORM pg_notify('model_changed', OLD.analysis_id::text);
  END IF;
  IF TG_OP IN ('INSERT', 'UPDATE') THEN
    PERFORM pg_notify('model_changed', NEW.analysis_id::text);
  END IF;
  RETURN NULL;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE TRIGGER regions_model_changed AFTER INSERT OR UPDATE OR DELETE ON regions FOR EACH ROW EXECUTE FUNCTION announce_model_change();
--> statement-breakpoint
CREATE TRIGGER processes_model_changed AFTER INSERT OR UPDATE OR DELETE ON processes FOR EACH ROW EXECUTE FUNCTION announce_model_change();
--> statement-breakpoint
CREATE TRIGGER floating_norms_model_changed AFTER INSERT OR UPDATE OR DELETE ON floating_norms FOR EACH ROW EXECUTE FUNCTION announce_model_change();
--> statement-breakpoint
CREATE TRIGGER templates_model_changed AFTER INSERT OR UPDATE OR DELETE ON templates FOR EACH ROW EXECUTE FUNCTION announce_model_change();
--> statement-breakpoint
-- effects carry no analysis id, and one statement can write tens of thousands: once per statement
CREATE OR REPLACE FUNCTION announce_model_change_for_effects() RETURNS trigger AS $$
BEGIN
  IF TG_OP = 'DELETE' THEN
    PERFORM pg_notify('model_changed', a::text) FROM (SELECT DISTINCT e.analysis_id AS a FROM entries e WHERE e.id IN (SELECT entry_id FROM changed_before)) touched;
  ELSE
    PERFORM pg_notify('model_changed', a::text) FROM (SELECT DISTINCT e.analysis_id AS a FROM entries e WHERE e.id IN (SELECT entry_id FROM changed_after)) touched;
  END IF;
  RETURN NULL;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE TRIGGER effects_insert_model_changed AFTER INSERT ON effects REFERENCING NEW TABLE AS changed_after FOR EACH STATEMENT EXECUTE FUNCTION announce_model_change_for_effects();
--> statement-breakpoint
CREATE TRIGGER effects_update_model_changed AFTER UPDATE ON effects REFERENCING NEW TABLE AS changed_after FOR EACH STATEMENT EXECUTE FUNCTION announce_model_change_for_effects();
--> statement-breakpoint
CREATE TRIGGER effects_delete_model_changed AFTER DELETE ON effects REFERENCING OLD TABLE AS changed_before FOR EACH STATEMENT EXECUTE FUNCTION announce_model_change_for_effects();
