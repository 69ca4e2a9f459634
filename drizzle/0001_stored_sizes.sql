ALTER TABLE "effects" ADD COLUMN "largest_pct" double precision DEFAULT -1 NOT NULL;--> statement-breakpoint
ALTER TABLE "fits" ADD COLUMN "headline" jsonb;