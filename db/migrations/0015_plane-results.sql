ALTER TABLE "result_versions" ALTER COLUMN "curve" DROP NOT NULL;--> statement-breakpoint
ALTER TABLE "result_versions" ADD COLUMN "plane" jsonb;--> statement-breakpoint
ALTER TABLE "result_versions" ADD COLUMN "plane_contours" jsonb;--> statement-breakpoint
ALTER TABLE "result_versions" ADD CONSTRAINT "result_versions_curve_or_plane" CHECK (("result_versions"."curve" is null) <> ("result_versions"."plane" is null));