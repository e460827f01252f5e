CREATE TYPE "public"."result_method" AS ENUM('asymptotic', 'toys', 'imported', 'other');--> statement-breakpoint
CREATE TYPE "public"."result_quantity" AS ENUM('mu', 'xsec');--> statement-breakpoint
CREATE TYPE "public"."result_state" AS ENUM('draft', 'published', 'superseded', 'retracted');--> statement-breakpoint
CREATE TABLE "result_versions" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"result_id" uuid NOT NULL,
	"version" integer NOT NULL,
	"state" "result_state" DEFAULT 'draft' NOT NULL,
	"title" text NOT NULL,
	"model" text DEFAULT '' NOT NULL,
	"parameter_name" text NOT NULL,
	"parameter_unit" text DEFAULT '' NOT NULL,
	"quantity" "result_quantity" NOT NULL,
	"quantity_unit" text DEFAULT '' NOT NULL,
	"sqrt_s" double precision NOT NULL,
	"luminosity" double precision NOT NULL,
	"cl" double precision NOT NULL,
	"method" "result_method" NOT NULL,
	"reference" text DEFAULT '' NOT NULL,
	"notes" text DEFAULT '' NOT NULL,
	"curve" jsonb NOT NULL,
	"theory" jsonb,
	"change_note" text DEFAULT '' NOT NULL,
	"source_name" text,
	"source_data" "bytea",
	"stored_bytes" bigint NOT NULL,
	"created_by" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	"published_at" timestamp with time zone,
	"retracted_at" timestamp with time zone,
	"retraction_reason" text
);
--> statement-breakpoint
CREATE TABLE "results" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"group_id" uuid NOT NULL,
	"slug" text NOT NULL,
	"is_public" boolean DEFAULT false NOT NULL,
	"last_version" integer DEFAULT 0 NOT NULL,
	"created_by" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "results_slug_unique" UNIQUE("slug")
);
--> statement-breakpoint
CREATE TABLE "api_tokens" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"user_id" text NOT NULL,
	"name" text NOT NULL,
	"prefix" text NOT NULL,
	"token_hash" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"last_used_at" timestamp with time zone,
	CONSTRAINT "api_tokens_tokenHash_unique" UNIQUE("token_hash")
);
--> statement-breakpoint
ALTER TABLE "groups" ADD COLUMN "storage_bytes" bigint DEFAULT 0 NOT NULL;--> statement-breakpoint
ALTER TABLE "result_versions" ADD CONSTRAINT "result_versions_result_id_results_id_fk" FOREIGN KEY ("result_id") REFERENCES "public"."results"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "result_versions" ADD CONSTRAINT "result_versions_created_by_user_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."user"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "results" ADD CONSTRAINT "results_group_id_groups_id_fk" FOREIGN KEY ("group_id") REFERENCES "public"."groups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "results" ADD CONSTRAINT "results_created_by_user_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."user"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "api_tokens" ADD CONSTRAINT "api_tokens_user_id_user_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."user"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "result_versions_result_id_version_index" ON "result_versions" USING btree ("result_id","version");--> statement-breakpoint
CREATE INDEX "result_versions_state_index" ON "result_versions" USING btree ("state");--> statement-breakpoint
CREATE INDEX "result_versions_parameter_name_index" ON "result_versions" USING btree ("parameter_name");--> statement-breakpoint
CREATE INDEX "result_versions_sqrt_s_index" ON "result_versions" USING btree ("sqrt_s");--> statement-breakpoint
CREATE INDEX "result_versions_method_index" ON "result_versions" USING btree ("method");--> statement-breakpoint
CREATE INDEX "results_group_id_updated_at_index" ON "results" USING btree ("group_id","updated_at");--> statement-breakpoint
CREATE INDEX "results_public" ON "results" USING btree ("id") WHERE "results"."is_public";--> statement-breakpoint
CREATE INDEX "api_tokens_user_id_index" ON "api_tokens" USING btree ("user_id");