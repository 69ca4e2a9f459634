-- An entry's page (its fields, owner, group and history) is kept in memory per entry. These
-- triggers announce a change to one entry on the channel "entry_changed" as "<analysis id>:<entry
-- id>", a change that touches every entry of an analysis (a group renamed or removed) as "<analysis
-- id>", and a change of anyone's name or address (owners and authors of revisions) as "*". The
-- server drops the pages concerned on hearing it, so a write elsewhere in the register leaves the
-- other entries' pages as they are.
CREATE OR REPLACE FUNCTION announce_entry_change() RETURNS trigger AS $$
BEGIN
  IF TG_OP IN ('UPDATE', 'DELETE') THEN
    PERFORM pg_notify('entry_changed', OLD.analysis_id::text || ':' || OLD.id::text);
  END IF;
  IF TG_OP IN ('INSERT', 'UPDATE') THEN
    PERFORM pg_notify('entry_changed', NEW.analysis_id::text || ':' || NEW.id::text);
  END IF;
  RETURN NULL;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE TRIGGER entries_entry_changed AFTER INSERT OR UPDATE OR DELETE ON entries FOR EACH ROW EXECUTE FUNCTION announce_entry_change();
--> statement-breakpoint
CREATE OR REPLACE FUNCTION announce_entry_change_for_revision() RETURNS trigger AS $$
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
CREATE TRIGGER revisions_entry_changed AFTER INSERT OR UPDATE OR DELETE ON revisions FOR EACH ROW EXECUTE FUNCTION announce_entry_change_for_revision();
--> statement-breakpoint
CREATE OR REPLACE FUNCTION announce_entry_change_for_group() RETURNS trigger AS $$
BEGIN
  PERFORM pg_notify('entry_changed', OLD.analysis_id::text);
  RETURN NULL;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE TRIGGER groups_entry_changed AFTER UPDATE OR DELETE ON groups FOR EACH ROW EXECUTE FUNCTION announce_entry_change_for_group();
--> statement-breakpoint
CREATE OR REPLACE FUNCTION announce_entry_change_for_user() RETURNS trigger AS $$
BEGIN
  PERFORM pg_notify('entry_changed', '*');
  RETURN NULL;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
-- (a person removed sets their revisions' author and their entries' owner to null: announced above)
CREATE TRIGGER users_entry_changed AFTER UPDATE OF name, email ON users FOR EACH ROW WHEN (OLD.name IS DISTINCT FROM NEW.name OR OLD.email IS DISTINCT FROM NEW.email) EXECUTE FUNCTION announce_entry_change_for_user();
