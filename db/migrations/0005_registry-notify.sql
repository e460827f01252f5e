-- Every change to what result lists and permanent links show is announced on one channel, after
-- the writing transaction commits (NOTIFY is delivered at commit). server/read-cache.ts listens.
CREATE OR REPLACE FUNCTION bw_registry_changed() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  PERFORM pg_notify('bw_registry_changed', '');
  RETURN NULL;
END $$;
--> statement-breakpoint
CREATE TRIGGER results_changed AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON results FOR EACH STATEMENT EXECUTE FUNCTION bw_registry_changed();
--> statement-breakpoint
CREATE TRIGGER result_versions_changed AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON result_versions FOR EACH STATEMENT EXECUTE FUNCTION bw_registry_changed();
--> statement-breakpoint
CREATE TRIGGER memberships_changed AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON memberships FOR EACH STATEMENT EXECUTE FUNCTION bw_registry_changed();
--> statement-breakpoint
CREATE TRIGGER groups_changed AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON groups FOR EACH STATEMENT EXECUTE FUNCTION bw_registry_changed();
