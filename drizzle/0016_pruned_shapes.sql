ALTER TABLE "effects" ADD COLUMN "pruned_to_scale" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "effects" ADD COLUMN "flat_p" double precision DEFAULT -1;