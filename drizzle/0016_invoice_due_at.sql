ALTER TABLE "invoices" ADD COLUMN "due_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "studio_billing" ADD COLUMN "ended_subscription_id" text;