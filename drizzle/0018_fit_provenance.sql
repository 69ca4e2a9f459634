ALTER TABLE "fits" ADD COLUMN "engine_version" varchar(100);--> statement-breakpoint
ALTER TABLE "fits" ADD COLUMN "engine_hash" varchar(64);--> statement-breakpoint
ALTER TABLE "fits" ADD COLUMN "input_sha256" varchar(64);--> statement-breakpoint
ALTER TABLE "fits" ADD COLUMN "reproduces_fit_id" integer;--> statement-breakpoint
ALTER TABLE "fits" ADD CONSTRAINT "fits_reproduces_fit_id_fits_id_fk" FOREIGN KEY ("reproduces_fit_id") REFERENCES "public"."fits"("id") ON DELETE set null ON UPDATE no action;