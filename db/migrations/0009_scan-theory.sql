ALTER TABLE "scan_points" ADD COLUMN "sigma_nominal_low" double precision;--> statement-breakpoint
ALTER TABLE "scan_points" ADD COLUMN "sigma_nominal_high" double precision;--> statement-breakpoint
ALTER TABLE "scans" ADD COLUMN "theory_label" text;