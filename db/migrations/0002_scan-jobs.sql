CREATE TYPE "public"."scan_point_state" AS ENUM('queued', 'done', 'failed', 'cancelled');--> statement-breakpoint
CREATE TYPE "public"."scan_state" AS ENUM('queued', 'running', 'done', 'failed', 'cancelled');--> statement-breakpoint
CREATE TABLE "scan_points" (
	"scan_id" uuid NOT NULL,
	"index" integer NOT NULL,
	"x" double precision NOT NULL,
	"sigma_nominal" double precision,
	"model" jsonb NOT NULL,
	"state" "scan_point_state" DEFAULT 'queued' NOT NULL,
	"result" jsonb,
	"error" jsonb,
	"attempts" integer DEFAULT 0 NOT NULL,
	"compute_ms" double precision,
	"finished_at" timestamp with time zone,
	CONSTRAINT "scan_points_scan_id_index_pk" PRIMARY KEY("scan_id","index")
);
--> statement-breakpoint
CREATE TABLE "scans" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"group_id" uuid NOT NULL,
	"state" "scan_state" DEFAULT 'queued' NOT NULL,
	"options" jsonb NOT NULL,
	"meta" jsonb NOT NULL,
	"target_result_id" uuid,
	"total_points" integer NOT NULL,
	"done_points" integer DEFAULT 0 NOT NULL,
	"failed_points" integer DEFAULT 0 NOT NULL,
	"source_name" text,
	"stored_bytes" bigint NOT NULL,
	"result_id" uuid,
	"draft_claimed_at" timestamp with time zone,
	"result_version" integer,
	"error" text,
	"created_by" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"started_at" timestamp with time zone,
	"finished_at" timestamp with time zone
);
--> statement-breakpoint
ALTER TABLE "scan_points" ADD CONSTRAINT "scan_points_scan_id_scans_id_fk" FOREIGN KEY ("scan_id") REFERENCES "public"."scans"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "scans" ADD CONSTRAINT "scans_group_id_groups_id_fk" FOREIGN KEY ("group_id") REFERENCES "public"."groups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "scans" ADD CONSTRAINT "scans_target_result_id_results_id_fk" FOREIGN KEY ("target_result_id") REFERENCES "public"."results"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "scans" ADD CONSTRAINT "scans_result_id_results_id_fk" FOREIGN KEY ("result_id") REFERENCES "public"."results"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "scans" ADD CONSTRAINT "scans_created_by_user_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."user"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "scans_group_id_created_at_index" ON "scans" USING btree ("group_id","created_at");--> statement-breakpoint
CREATE INDEX "scans_result_id_index" ON "scans" USING btree ("result_id");