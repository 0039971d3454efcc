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
ALTER TABLE "snapshots" ADD CONSTRAINT "snapshots_studio_id_studios_id_fk" FOREIGN KEY ("studio_id") REFERENCES "public"."studios"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "snapshots" ADD CONSTRAINT "snapshots_created_by_user_id_users_id_fk" FOREIGN KEY ("created_by_user_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "snapshots_studio_name_version_uq" ON "snapshots" USING btree ("studio_id","name","version");--> statement-breakpoint
CREATE INDEX "snapshots_studio_created_idx" ON "snapshots" USING btree ("studio_id","created_at");