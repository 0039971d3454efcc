CREATE TABLE "sweep_results" (
	"id" serial PRIMARY KEY NOT NULL,
	"sweep_id" text NOT NULL,
	"studio_id" text NOT NULL,
	"chunk_index" integer NOT NULL,
	"cells" integer NOT NULL,
	"complete" boolean NOT NULL,
	"bytes" integer NOT NULL,
	"location" text,
	"data" "bytea",
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
DROP TABLE "result_cache" CASCADE;--> statement-breakpoint
DROP TABLE "sweep_cells" CASCADE;--> statement-breakpoint
ALTER TABLE "sweeps" ADD COLUMN "verdict_counts" jsonb DEFAULT '{}'::jsonb NOT NULL;--> statement-breakpoint
ALTER TABLE "sweep_results" ADD CONSTRAINT "sweep_results_sweep_id_sweeps_id_fk" FOREIGN KEY ("sweep_id") REFERENCES "public"."sweeps"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sweep_results" ADD CONSTRAINT "sweep_results_studio_id_studios_id_fk" FOREIGN KEY ("studio_id") REFERENCES "public"."studios"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "sweep_results_sweep_chunk_uq" ON "sweep_results" USING btree ("sweep_id","chunk_index");--> statement-breakpoint
CREATE INDEX "sweep_results_studio_idx" ON "sweep_results" USING btree ("studio_id","id");