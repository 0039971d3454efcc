ALTER TABLE "sweep_results" ADD COLUMN "recorded_seq" bigserial NOT NULL;--> statement-breakpoint
CREATE INDEX "sweep_results_sweep_seq_idx" ON "sweep_results" USING btree ("sweep_id","recorded_seq");