CREATE TABLE "ledger_entries" (
	"id" serial PRIMARY KEY NOT NULL,
	"studio_id" text NOT NULL,
	"kind" text NOT NULL,
	"compute_ms" bigint NOT NULL,
	"amount_cents" integer DEFAULT 0 NOT NULL,
	"idempotency_key" text NOT NULL,
	"sweep_id" text,
	"chunk_index" integer,
	"memo" text DEFAULT '' NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "ledger_entries_idempotency_key_unique" UNIQUE("idempotency_key"),
	CONSTRAINT "ledger_entries_kind_known" CHECK ("ledger_entries"."kind" in ('purchase', 'usage', 'adjustment', 'refund'))
);
--> statement-breakpoint
CREATE TABLE "result_cache" (
	"studio_id" text NOT NULL,
	"scenario_hash" text NOT NULL,
	"metrics" jsonb NOT NULL,
	"verdict" text NOT NULL,
	"reason" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "result_cache_studio_id_scenario_hash_pk" PRIMARY KEY("studio_id","scenario_hash")
);
--> statement-breakpoint
CREATE TABLE "sweep_cells" (
	"sweep_id" text NOT NULL,
	"cell_index" integer NOT NULL,
	"scenario_hash" text NOT NULL,
	"metrics" jsonb NOT NULL,
	"verdict" text NOT NULL,
	"reason" text NOT NULL,
	"from_cache" boolean DEFAULT false NOT NULL,
	CONSTRAINT "sweep_cells_sweep_id_cell_index_pk" PRIMARY KEY("sweep_id","cell_index")
);
--> statement-breakpoint
CREATE TABLE "sweep_chunks" (
	"id" serial PRIMARY KEY NOT NULL,
	"sweep_id" text NOT NULL,
	"chunk_index" integer NOT NULL,
	"first_cell" integer NOT NULL,
	"cell_count" integer NOT NULL,
	"status" text DEFAULT 'queued' NOT NULL,
	"lease_owner" text,
	"lease_expires_at" timestamp with time zone,
	"attempts" integer DEFAULT 0 NOT NULL,
	"last_error" text,
	"compute_ms" integer DEFAULT 0 NOT NULL,
	CONSTRAINT "sweep_chunks_status_known" CHECK ("sweep_chunks"."status" in ('queued', 'running', 'done', 'cancelled', 'failed'))
);
--> statement-breakpoint
CREATE TABLE "sweeps" (
	"id" text PRIMARY KEY NOT NULL,
	"studio_id" text NOT NULL,
	"name" text NOT NULL,
	"spec" jsonb NOT NULL,
	"spec_hash" text NOT NULL,
	"status" text DEFAULT 'queued' NOT NULL,
	"reason" text,
	"cells" integer NOT NULL,
	"cells_done" integer DEFAULT 0 NOT NULL,
	"cached_cells" integer DEFAULT 0 NOT NULL,
	"chunks" integer NOT NULL,
	"chunks_done" integer DEFAULT 0 NOT NULL,
	"estimated_compute_ms" integer NOT NULL,
	"compute_ms" integer DEFAULT 0 NOT NULL,
	"created_by_user_id" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"started_at" timestamp with time zone,
	"finished_at" timestamp with time zone,
	CONSTRAINT "sweeps_status_known" CHECK ("sweeps"."status" in ('queued', 'running', 'paused', 'done', 'failed', 'cancelled'))
);
--> statement-breakpoint
ALTER TABLE "ledger_entries" ADD CONSTRAINT "ledger_entries_studio_id_studios_id_fk" FOREIGN KEY ("studio_id") REFERENCES "public"."studios"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "ledger_entries" ADD CONSTRAINT "ledger_entries_sweep_id_sweeps_id_fk" FOREIGN KEY ("sweep_id") REFERENCES "public"."sweeps"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "result_cache" ADD CONSTRAINT "result_cache_studio_id_studios_id_fk" FOREIGN KEY ("studio_id") REFERENCES "public"."studios"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sweep_cells" ADD CONSTRAINT "sweep_cells_sweep_id_sweeps_id_fk" FOREIGN KEY ("sweep_id") REFERENCES "public"."sweeps"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sweep_chunks" ADD CONSTRAINT "sweep_chunks_sweep_id_sweeps_id_fk" FOREIGN KEY ("sweep_id") REFERENCES "public"."sweeps"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sweeps" ADD CONSTRAINT "sweeps_studio_id_studios_id_fk" FOREIGN KEY ("studio_id") REFERENCES "public"."studios"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sweeps" ADD CONSTRAINT "sweeps_created_by_user_id_users_id_fk" FOREIGN KEY ("created_by_user_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "ledger_entries_studio_idx" ON "ledger_entries" USING btree ("studio_id","created_at");--> statement-breakpoint
CREATE UNIQUE INDEX "sweep_chunks_sweep_index_uq" ON "sweep_chunks" USING btree ("sweep_id","chunk_index");--> statement-breakpoint
CREATE INDEX "sweep_chunks_status_idx" ON "sweep_chunks" USING btree ("status","id");--> statement-breakpoint
CREATE INDEX "sweeps_studio_created_idx" ON "sweeps" USING btree ("studio_id","created_at");