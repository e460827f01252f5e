CREATE TABLE "upload_idempotency" (
	"group_id" uuid NOT NULL,
	"key" text NOT NULL,
	"user_id" text NOT NULL,
	"request_hash" text NOT NULL,
	"result_id" uuid,
	"version" integer,
	"status" integer DEFAULT 201 NOT NULL,
	"warnings" jsonb DEFAULT '[]'::jsonb NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"expires_at" timestamp with time zone NOT NULL,
	CONSTRAINT "upload_idempotency_group_id_key_pk" PRIMARY KEY("group_id","key")
);
--> statement-breakpoint
ALTER TABLE "upload_idempotency" ADD CONSTRAINT "upload_idempotency_group_id_groups_id_fk" FOREIGN KEY ("group_id") REFERENCES "public"."groups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "upload_idempotency" ADD CONSTRAINT "upload_idempotency_user_id_user_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."user"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "upload_idempotency" ADD CONSTRAINT "upload_idempotency_result_id_results_id_fk" FOREIGN KEY ("result_id") REFERENCES "public"."results"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "upload_idempotency_group_id_expires_at_index" ON "upload_idempotency" USING btree ("group_id","expires_at");