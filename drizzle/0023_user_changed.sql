-- Who a session belongs to (a user's name, address and admin flag) is kept in memory by the
-- server; this trigger announces every change to a user on the channel "user_changed" with the
-- user's id, and the server drops its copy of that user on hearing it.
CREATE OR REPLACE FUNCTION announce_user_change() RETURNS trigger AS $$
BEGIN
  IF TG_OP IN ('UPDATE', 'DELETE') THEN
    PERFORM pg_notify('user_changed', OLD.id::text);
  END IF;
  IF TG_OP IN ('INSERT', 'UPDATE') THEN
    PERFORM pg_notify('user_changed', NEW.id::text);
  END IF;
  RETURN NULL;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE TRIGGER users_user_changed AFTER INSERT OR UPDATE OR DELETE ON users FOR EACH ROW EXECUTE FUNCTION announce_user_change();
