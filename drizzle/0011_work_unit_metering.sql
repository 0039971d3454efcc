ALTER TABLE "sweep_chunks" ADD COLUMN "ceiling_ms" integer DEFAULT 0 NOT NULL;--> statement-breakpoint
ALTER TABLE "sweep_chunks" ADD COLUMN "work_units" bigint DEFAULT 0 NOT NULL;--> statement-breakpoint
ALTER TABLE "sweep_chunks" ADD COLUMN "wall_ms" integer DEFAULT 0 NOT NULL;--> statement-breakpoint
ALTER TABLE "sweeps" ADD COLUMN "metering" text DEFAULT 'wall-clock' NOT NULL;--> statement-breakpoint
ALTER TABLE "sweeps" ADD COLUMN "ceiling_ms" integer DEFAULT 0 NOT NULL;--> statement-breakpoint
ALTER TABLE "sweeps" ADD COLUMN "released_ceiling_ms" integer DEFAULT 0 NOT NULL;--> statement-breakpoint
ALTER TABLE "sweeps" ADD COLUMN "work_units" bigint DEFAULT 0 NOT NULL;