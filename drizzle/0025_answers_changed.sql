-- The register's copy depends on neither answers nor revisions, yet both announced a change on
-- "register_changed" (drizzle/0009) for the copies kept with it. Entry pages now have their own
-- channel ("entry_changed", drizzle/0024), and the lists of questions listen to "answers_changed"
-- as well, so an answer or a revision no longer makes the server rebuild the whole register.
DROP TRIGGER IF EXISTS revisions_register_changed ON revisions;
--> statement-breakpoint
DROP TRIGGER IF EXISTS answers_register_changed ON answers;
--> statement-breakpoint
DROP FUNCTION IF EXISTS announce_register_change_for_answers();
--> statement-breakpoint
CREATE OR REPLACE FUNCTION announce_answers_change() RETURNS trigger AS $$
BEGIN
  PERFORM pg_notify('answers_changed', q.analysis_id::text) FROM questions q WHERE q.id = COALESCE(NEW.question_id, OLD.question_id);
  RETURN NULL;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE TRIGGER answers_answers_changed AFTER INSERT OR UPDATE OR DELETE ON answers FOR EACH ROW EXECUTE FUNCTION announce_answers_change();
