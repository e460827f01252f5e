CREATE TYPE "public"."scan_task_state" AS ENUM('queued', 'running', 'done', 'failed', 'cancelled');--> statement-breakpoint
CREATE TABLE "scan_group_turns" (
	"group_id" uuid PRIMARY KEY NOT NULL,
	"last_claimed_at" timestamp with time zone NOT NULL
);
--> statement-breakpoint
CREATE TABLE "scan_tasks" (
	"id" bigint PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "scan_tasks_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 9223372036854775807 START WITH 1 CACHE 1),
	"scan_id" uuid NOT NULL,
	"group_id" uuid NOT NULL,
	"point_index" integer NOT NULL,
	"chunk" integer DEFAULT 0 NOT NULL,
	"cost" integer NOT NULL,
	"state" "scan_task_state" DEFAULT 'queued' NOT NULL,
	"attempts" integer DEFAULT 0 NOT NULL,
	"run_after" timestamp with time zone DEFAULT now() NOT NULL,
	"lease_until" timestamp with time zone,
	"claimed_at" timestamp with time zone,
	"heartbeat_at" timestamp with time zone,
	"steps" integer DEFAULT 0 NOT NULL,
	"samples" "bytea",
	"stats" jsonb,
	"last_error" text,
	"finished_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "scan_points" ADD COLUMN "chunks" integer DEFAULT 1 NOT NULL;--> statement-breakpoint
ALTER TABLE "scan_group_turns" ADD CONSTRAINT "scan_group_turns_group_id_groups_id_fk" FOREIGN KEY ("group_id") REFERENCES "public"."groups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "scan_tasks" ADD CONSTRAINT "scan_tasks_scan_id_scans_id_fk" FOREIGN KEY ("scan_id") REFERENCES "public"."scans"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "scan_tasks" ADD CONSTRAINT "scan_tasks_group_id_groups_id_fk" FOREIGN KEY ("group_id") REFERENCES "public"."groups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "scan_tasks_scan_id_point_index_chunk_index" ON "scan_tasks" USING btree ("scan_id","point_index","chunk");--> statement-breakpoint
CREATE INDEX "scan_tasks_open_idx" ON "scan_tasks" USING btree ("group_id","state") WHERE "scan_tasks"."state" in ('queued', 'running');--> statement-breakpoint
CREATE INDEX "scan_tasks_group_id_claimed_at_index" ON "scan_tasks" USING btree ("group_id","claimed_at");--> statement-breakpoint
-- Unfinished scans started before this migration had their tasks in the former queue: queue
-- their remaining points here (pseudo-experiment points in chunks of 250 per hypothesis, as
-- shared/stats/toy-chunks.ts splits them).
UPDATE "scan_points" AS p SET "chunks" = CASE WHEN s."options"->>'method' = 'toys' THEN greatest(1, ceil((s."options"->>'toys')::numeric / 250))::int ELSE 1 END
FROM "scans" AS s WHERE s."id" = p."scan_id" AND s."state" IN ('queued', 'running') AND p."state" = 'queued';--> statement-breakpoint
INSERT INTO "scan_tasks" ("scan_id", "group_id", "point_index", "chunk", "cost")
SELECT p."scan_id", s."group_id", p."index", c.chunk,
  CASE WHEN s."options"->>'method' = 'toys'
    THEN ((s."options"->>'toys')::int / p."chunks") + CASE WHEN c.chunk < ((s."options"->>'toys')::int % p."chunks") THEN 1 ELSE 0 END
    ELSE 1 END
FROM "scan_points" AS p
JOIN "scans" AS s ON s."id" = p."scan_id"
CROSS JOIN LATERAL generate_series(0, p."chunks" - 1) AS c(chunk)
WHERE s."state" IN ('queued', 'running') AND p."state" = 'queued'
ORDER BY s."created_at", p."index", c.chunk;
