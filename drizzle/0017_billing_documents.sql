ALTER TABLE "invoices" ADD COLUMN "kind" text DEFAULT 'overage' NOT NULL;--> statement-breakpoint
ALTER TABLE "invoices" ADD COLUMN "hosted_invoice_url" text;--> statement-breakpoint
ALTER TABLE "invoices" ADD COLUMN "invoice_pdf_url" text;--> statement-breakpoint
ALTER TABLE "studio_billing" ADD COLUMN "billing_email" text;--> statement-breakpoint
ALTER TABLE "studio_billing" ADD COLUMN "billing_address" jsonb;--> statement-breakpoint
ALTER TABLE "studio_billing" ADD COLUMN "tax_id" text;