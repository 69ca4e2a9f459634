ALTER TABLE "analyses" ADD COLUMN "plot_labels" jsonb DEFAULT '{"experiment":"","status":"Internal","luminosity":"","energy":""}'::jsonb NOT NULL;--> statement-breakpoint
ALTER TABLE "effects" ADD COLUMN "nominal_at_upload" jsonb;--> statement-breakpoint
ALTER TABLE "effects" ADD COLUMN "stale_since" timestamp with time zone;