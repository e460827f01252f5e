CREATE TYPE "public"."billing_interval" AS ENUM('month', 'year');--> statement-breakpoint
CREATE TYPE "public"."plan_id" AS ENUM('free', 'institutional');--> statement-breakpoint
CREATE TYPE "public"."subscription_status" AS ENUM('none', 'incomplete', 'active', 'past_due', 'canceled', 'unpaid');--> statement-breakpoint
CREATE TABLE "figure_layers" (
	"figure_id" uuid NOT NULL,
	"figure_version" integer NOT NULL,
	"position" integer NOT NULL,
	"result_id" uuid NOT NULL,
	"result_version" integer NOT NULL,
	CONSTRAINT "figure_layers_figure_id_figure_version_position_pk" PRIMARY KEY("figure_id","figure_version","position")
);
--> statement-breakpoint
CREATE TABLE "figure_renders" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"figure_id" uuid NOT NULL,
	"figure_version" integer NOT NULL,
	"format" text NOT NULL,
	"size_key" text NOT NULL,
	"data_key" text NOT NULL,
	"variant" text NOT NULL,
	"content_type" text NOT NULL,
	"body" "bytea" NOT NULL,
	"byte_length" bigint NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"last_used_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "figure_versions" (
	"figure_id" uuid NOT NULL,
	"version" integer NOT NULL,
	"spec" jsonb NOT NULL,
	"note" text DEFAULT '' NOT NULL,
	"created_by" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "figure_versions_figure_id_version_pk" PRIMARY KEY("figure_id","version")
);
--> statement-breakpoint
CREATE TABLE "figures" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"group_id" uuid NOT NULL,
	"title" text NOT NULL,
	"is_public" boolean DEFAULT false NOT NULL,
	"last_version" integer DEFAULT 0 NOT NULL,
	"derived_from" uuid,
	"created_by" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "group_styles" (
	"group_id" uuid PRIMARY KEY NOT NULL,
	"style" jsonb NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "result_hues" (
	"group_id" uuid NOT NULL,
	"result_id" uuid NOT NULL,
	"hue" integer NOT NULL,
	CONSTRAINT "result_hues_group_id_result_id_pk" PRIMARY KEY("group_id","result_id")
);
--> statement-breakpoint
CREATE TABLE "billing_accounts" (
	"group_id" uuid PRIMARY KEY NOT NULL,
	"plan" "plan_id" DEFAULT 'free' NOT NULL,
	"status" "subscription_status" DEFAULT 'none' NOT NULL,
	"interval" "billing_interval",
	"customer_id" text,
	"subscription_id" text,
	"current_period_end" timestamp with time zone,
	"last_event_at" timestamp with time zone,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "billing_accounts_customerId_unique" UNIQUE("customer_id"),
	CONSTRAINT "billing_accounts_subscriptionId_unique" UNIQUE("subscription_id")
);
--> statement-breakpoint
CREATE TABLE "invoices" (
	"id" text PRIMARY KEY NOT NULL,
	"group_id" uuid NOT NULL,
	"amount_cents" bigint NOT NULL,
	"currency" text NOT NULL,
	"status" text NOT NULL,
	"period_start" timestamp with time zone,
	"period_end" timestamp with time zone,
	"paid_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "provider_events" (
	"id" text PRIMARY KEY NOT NULL,
	"type" text NOT NULL,
	"created_at" timestamp with time zone NOT NULL,
	"processed_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "figure_layers" ADD CONSTRAINT "figure_layers_figure_id_figures_id_fk" FOREIGN KEY ("figure_id") REFERENCES "public"."figures"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "figure_layers" ADD CONSTRAINT "figure_layers_result_id_results_id_fk" FOREIGN KEY ("result_id") REFERENCES "public"."results"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "figure_renders" ADD CONSTRAINT "figure_renders_figure_id_figures_id_fk" FOREIGN KEY ("figure_id") REFERENCES "public"."figures"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "figure_versions" ADD CONSTRAINT "figure_versions_figure_id_figures_id_fk" FOREIGN KEY ("figure_id") REFERENCES "public"."figures"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "figure_versions" ADD CONSTRAINT "figure_versions_created_by_user_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."user"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "figures" ADD CONSTRAINT "figures_group_id_groups_id_fk" FOREIGN KEY ("group_id") REFERENCES "public"."groups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "figures" ADD CONSTRAINT "figures_created_by_user_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."user"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "group_styles" ADD CONSTRAINT "group_styles_group_id_groups_id_fk" FOREIGN KEY ("group_id") REFERENCES "public"."groups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "result_hues" ADD CONSTRAINT "result_hues_group_id_groups_id_fk" FOREIGN KEY ("group_id") REFERENCES "public"."groups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "result_hues" ADD CONSTRAINT "result_hues_result_id_results_id_fk" FOREIGN KEY ("result_id") REFERENCES "public"."results"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "billing_accounts" ADD CONSTRAINT "billing_accounts_group_id_groups_id_fk" FOREIGN KEY ("group_id") REFERENCES "public"."groups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "invoices" ADD CONSTRAINT "invoices_group_id_groups_id_fk" FOREIGN KEY ("group_id") REFERENCES "public"."groups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "figure_layers_result_id_index" ON "figure_layers" USING btree ("result_id");--> statement-breakpoint
CREATE UNIQUE INDEX "figure_renders_figure_id_figure_version_format_size_key_data_key_variant_index" ON "figure_renders" USING btree ("figure_id","figure_version","format","size_key","data_key","variant");--> statement-breakpoint
CREATE INDEX "figure_renders_last_used_at_index" ON "figure_renders" USING btree ("last_used_at");--> statement-breakpoint
CREATE INDEX "figures_group_id_updated_at_index" ON "figures" USING btree ("group_id","updated_at");--> statement-breakpoint
CREATE INDEX "invoices_group_id_created_at_index" ON "invoices" USING btree ("group_id","created_at");