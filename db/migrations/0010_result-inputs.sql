CREATE TABLE "result_inputs" (
	"result_id" uuid NOT NULL,
	"version" integer NOT NULL,
	"position" integer NOT NULL,
	"input_result_id" uuid,
	"input_version" integer NOT NULL,
	"input_title" text NOT NULL
);
--> statement-breakpoint
ALTER TABLE "result_inputs" ADD CONSTRAINT "result_inputs_result_id_results_id_fk" FOREIGN KEY ("result_id") REFERENCES "public"."results"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "result_inputs" ADD CONSTRAINT "result_inputs_input_result_id_results_id_fk" FOREIGN KEY ("input_result_id") REFERENCES "public"."results"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "result_inputs_result_id_version_position_index" ON "result_inputs" USING btree ("result_id","version","position");--> statement-breakpoint
CREATE INDEX "result_inputs_input_result_id_index" ON "result_inputs" USING btree ("input_result_id");