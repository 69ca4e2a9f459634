ALTER TABLE "blinding_events" ADD COLUMN "checklist" jsonb;--> statement-breakpoint
ALTER TABLE "model_versions" ADD COLUMN "register" jsonb;--> statement-breakpoint
ALTER TABLE "model_versions" ADD COLUMN "approval_override" jsonb;