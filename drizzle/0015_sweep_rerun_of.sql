ALTER TABLE "sweeps" ADD COLUMN "rerun_of_sweep_id" text;--> statement-breakpoint
ALTER TABLE "sweeps" ADD COLUMN "rerun_of_cell_index" integer;--> statement-breakpoint
ALTER TABLE "sweeps" ADD CONSTRAINT "sweeps_rerun_of_sweep_id_sweeps_id_fk" FOREIGN KEY ("rerun_of_sweep_id") REFERENCES "public"."sweeps"("id") ON DELETE set null ON UPDATE no action;