ALTER TABLE "effects" ADD COLUMN "up_shift_variance" jsonb;--> statement-breakpoint
ALTER TABLE "effects" ADD COLUMN "down_shift_variance" jsonb;