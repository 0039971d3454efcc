CREATE TABLE "catalogue_checks" (
	"id" text PRIMARY KEY NOT NULL,
	"studio_id" text NOT NULL,
	"catalogue_id" text NOT NULL,
	"sweep_id" text NOT NULL,
	"settings" jsonb NOT NULL,
	"created_by_user_id" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "catalogues" (
	"id" text PRIMARY KEY NOT NULL,
	"studio_id" text NOT NULL,
	"name" text NOT NULL,
	"version" integer NOT NULL,
	"content_hash" text NOT NULL,
	"file_name" text NOT NULL,
	"media_type" text NOT NULL,
	"file_base64" text NOT NULL,
	"file_bytes" integer NOT NULL,
	"format" text NOT NULL,
	"objects" jsonb NOT NULL,
	"object_count" integer NOT NULL,
	"created_by_user_id" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "snapshots" (
	"id" text PRIMARY KEY NOT NULL,
	"studio_id" text NOT NULL,
	"name" text NOT NULL,
	"version" integer NOT NULL,
	"content_hash" text NOT NULL,
	"file_name" text NOT NULL,
	"file_base64" text NOT NULL,
	"file_bytes" integer NOT NULL,
	"scene" jsonb NOT NULL,
	"body_count" integer NOT NULL,
	"wall_count" integer NOT NULL,
	"created_by_user_id" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "catalogue_checks" ADD CONSTRAINT "catalogue_checks_studio_id_studios_id_fk" FOREIGN KEY ("studio_id") REFERENCES "public"."studios"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "catalogue_checks" ADD CONSTRAINT "catalogue_checks_catalogue_id_catalogues_id_fk" FOREIGN KEY ("catalogue_id") REFERENCES "public"."catalogues"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "catalogue_checks" ADD CONSTRAINT "catalogue_checks_sweep_id_sweeps_id_fk" FOREIGN KEY ("sweep_id") REFERENCES "public"."sweeps"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "catalogue_checks" ADD CONSTRAINT "catalogue_checks_created_by_user_id_users_id_fk" FOREIGN KEY ("created_by_user_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "catalogues" ADD CONSTRAINT "catalogues_studio_id_studios_id_fk" FOREIGN KEY ("studio_id") REFERENCES "public"."studios"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "catalogues" ADD CONSTRAINT "catalogues_created_by_user_id_users_id_fk" FOREIGN KEY ("created_by_user_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "snapshots" ADD CONSTRAINT "snapshots_studio_id_studios_id_fk" FOREIGN KEY ("studio_id") REFERENCES "public"."studios"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "snapshots" ADD CONSTRAINT "snapshots_created_by_user_id_users_id_fk" FOREIGN KEY ("created_by_user_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "catalogue_checks_catalogue_idx" ON "catalogue_checks" USING btree ("catalogue_id","created_at");--> statement-breakpoint
CREATE UNIQUE INDEX "catalogue_checks_sweep_uq" ON "catalogue_checks" USING btree ("sweep_id");--> statement-breakpoint
CREATE UNIQUE INDEX "catalogues_studio_name_version_uq" ON "catalogues" USING btree ("studio_id","name","version");--> statement-breakpoint
CREATE INDEX "catalogues_studio_created_idx" ON "catalogues" USING btree ("studio_id","created_at");--> statement-breakpoint
CREATE UNIQUE INDEX "snapshots_studio_name_version_uq" ON "snapshots" USING btree ("studio_id","name","version");--> statement-breakpoint
CREATE INDEX "snapshots_studio_created_idx" ON "snapshots" USING btree ("studio_id","created_at");