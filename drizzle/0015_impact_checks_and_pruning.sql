CREATE TABLE "impact_checks" (
	"id" serial PRIMARY KEY NOT NULL,
	"analysis_id" integer NOT NULL,
	"entry_id" integer,
	"kind" varchar(20) NOT NULL,
	"fit_id" integer,
	"state" varchar(20) DEFAULT 'running' NOT NULL,
	"result" jsonb,
	"failure" text,
	"created_by_id" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "analyses" ADD COLUMN "prune_below_pct" double precision DEFAULT 0.1 NOT NULL;--> statement-breakpoint
ALTER TABLE "analyses" ADD COLUMN "prune_shape_p" double precision DEFAULT 0.05 NOT NULL;--> statement-breakpoint
ALTER TABLE "effects" ADD COLUMN "pruned" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "impact_checks" ADD CONSTRAINT "impact_checks_analysis_id_analyses_id_fk" FOREIGN KEY ("analysis_id") REFERENCES "public"."analyses"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "impact_checks" ADD CONSTRAINT "impact_checks_entry_id_entries_id_fk" FOREIGN KEY ("entry_id") REFERENCES "public"."entries"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "impact_checks" ADD CONSTRAINT "impact_checks_fit_id_fits_id_fk" FOREIGN KEY ("fit_id") REFERENCES "public"."fits"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "impact_checks" ADD CONSTRAINT "impact_checks_created_by_id_users_id_fk" FOREIGN KEY ("created_by_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "impact_checks_entry" ON "impact_checks" USING btree ("entry_id");