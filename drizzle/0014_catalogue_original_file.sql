ALTER TABLE "catalogues" ADD COLUMN "original_file_name" text;--> statement-breakpoint
ALTER TABLE "catalogues" ADD COLUMN "original_file_base64" text;--> statement-breakpoint
ALTER TABLE "catalogues" ADD COLUMN "original_file_bytes" integer;--> statement-breakpoint
ALTER TABLE "catalogues" ADD COLUMN "original_content_hash" text;