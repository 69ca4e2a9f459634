-- The entry pages and the questions are served from copies kept with the register (channel
-- "register_changed", drizzle/0002): an answer changes a question's count and last activity, and
-- a revision joins an entry's history, so both announce the change too.
CREATE OR REPLACE FUNCTION announce_register_change_for_answers() RETURNS trigger AS $$
BEGIN
  PERFORM pg_notify('register_changed', q.analysis_id::text) FROM questions q WHERE q.id = COALESCE(NEW.question_id, OLD.question_id);
  RETURN NULL;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE TRIGGER answers_register_changed AFTER INSERT OR UPDATE OR DELETE ON answers FOR EACH ROW EXECUTE FUNCTION announce_register_change_for_answers();
--> statement-breakpoint
CREATE TRIGGER revisions_register_changed AFTER INSERT OR UPDATE OR DELETE ON revisions FOR EACH ROW EXECUTE FUNCTION announce_register_change();
