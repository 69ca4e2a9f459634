-- Who a user is in an analysis (the analysis row and their membership) is kept in memory per
-- request path; these triggers announce every change to analyses and memberships on the
-- channel "access_changed" at commit, and the server drops its copies on hearing it.
CREATE OR REPLACE FUNCTION announce_access_change() RETURNS trigger AS $$
BEGIN
  PERFORM pg_notify('access_changed', '');
  RETURN NULL;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE TRIGGER analyses_access_changed AFTER INSERT OR UPDATE OR DELETE ON analyses FOR EACH STATEMENT EXECUTE FUNCTION announce_access_change();
--> statement-breakpoint
CREATE TRIGGER memberships_access_changed AFTER INSERT OR UPDATE OR DELETE ON memberships FOR EACH STATEMENT EXECUTE FUNCTION announce_access_change();
