ALTER TABLE "scan_points" ADD COLUMN "toys" integer;--> statement-breakpoint
ALTER TABLE "scans" ADD COLUMN "rerun_of" uuid;--> statement-breakpoint
ALTER TABLE "scans" ADD COLUMN "rerun_point" integer;--> statement-breakpoint
ALTER TABLE "scans" ADD CONSTRAINT "scans_rerun_of_scans_id_fk" FOREIGN KEY ("rerun_of") REFERENCES "public"."scans"("id") ON DELETE set null ON UPDATE no action;