-- The register is served from a copy kept in memory. These triggers announce every change to
-- what the register shows (entries, their effects, groups, questions, owners' names) on the channel
-- "register_changed" with the analysis id, at commit; the server drops its copy on hearing it.
-- Writers cannot forget to announce a change, and changes made by another process count too.
CREATE OR REPLACE FUNCTION announce_register_change() RETURNS trigger AS $$
BEGIN
  IF TG_OP IN ('UPDATE', 'DELETE') THEN
    PERFORM pg_notify('register_changed', OLD.analysis_id::text);
  END IF;
  IF TG_OP IN ('INSERT', 'UPDATE') THEN
    PERFORM pg_notify('register_changed', NEW.analysis_id::text);
  END IF;
  RETURN NULL;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE TRIGGER entries_register_changed AFTER INSERT OR UPDATE OR DELETE ON entries FOR EACH ROW EXECUTE FUNCTION announce_register_change();
--> statement-breakpoint
CREATE TRIGGER groups_register_changed AFTER INSERT OR UPDATE OR DELETE ON groups FOR EACH ROW EXECUTE FUNCTION announce_register_change();
--> statement-breakpoint
CREATE TRIGGER questions_register_changed AFTER INSERT OR UPDATE OR DELETE ON questions FOR EACH ROW EXECUTE FUNCTION announce_register_change();
--> statement-breakpoint
-- an owner's name or address shows on every entry they own
CREATE OR REPLACE FUNCTION announce_register_change_for_owner() RETURNS trigger AS $$
BEGIN
  PERFORM pg_notify('register_changed', a::text) FROM (SELECT DISTINCT analysis_id AS a FROM entries WHERE owner_id = NEW.id) owned;
  RETURN NULL;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE TRIGGER users_register_changed AFTER UPDATE OF name, email ON users FOR EACH ROW WHEN (OLD.name IS DISTINCT FROM NEW.name OR OLD.email IS DISTINCT FROM NEW.email) EXECUTE FUNCTION announce_register_change_for_owner();
--> statement-breakpoint
-- effects carry no analysis id, and one statement can write tens of thousands: these fire once per statement
CREATE OR REPLACE FUNCTION announce_register_change_for_effects() RETURNS trigger AS $$
BEGIN
  IF TG_OP = 'DELETE' THEN
    PERFORM pg_notify('register_changed', a::text) FROM (SELECT DISTINCT e.analysis_id AS a FROM entries e WHERE e.id IN (SELECT entry_id FROM changed_before)) touched;
  ELSE
    PERFORM pg_notify('register_changed', a::text) FROM (SELECT DISTINCT e.analysis_id AS a FROM entries e WHERE e.id IN (SELECT entry_id FROM changed_after)) touched;
  END IF;
  RETURN NULL;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE TRIGGER effects_insert_register_changed AFTER INSERT ON effects REFERENCING NEW TABLE AS changed_after FOR EACH STATEMENT EXECUTE FUNCTION announce_register_change_for_effects();
--> statement-breakpoint
CREATE TRIGGER effects_update_register_changed AFTER UPDATE ON effects REFERENCING NEW TABLE AS changed_after FOR EACH STATEMENT EXECUTE FUNCTION announce_register_change_for_effects();
--> statement-breakpoint
CREATE TRIGGER effects_delete_register_changed AFTER DELETE ON effects REFERENCING OLD TABLE AS changed_before FOR EACH STATEMENT EXECUTE FUNCTION announce_register_change_for_effects();
