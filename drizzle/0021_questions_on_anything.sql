ALTER TABLE "questions" ALTER COLUMN "entry_id" DROP NOT NULL;--> statement-breakpoint
ALTER TABLE "answers" ADD COLUMN "evidence" jsonb DEFAULT '[]'::jsonb NOT NULL;--> statement-breakpoint
ALTER TABLE "questions" ADD COLUMN "subject" varchar(16) DEFAULT 'parameter' NOT NULL;--> statement-breakpoint
ALTER TABLE "questions" ADD COLUMN "region_key" varchar(64);--> statement-breakpoint
ALTER TABLE "questions" ADD COLUMN "bin" integer;--> statement-breakpoint
ALTER TABLE "questions" ADD COLUMN "version_id" integer;--> statement-breakpoint
ALTER TABLE "questions" ADD CONSTRAINT "questions_version_id_model_versions_id_fk" FOREIGN KEY ("version_id") REFERENCES "public"."model_versions"("id") ON DELETE set null ON UPDATE no action;