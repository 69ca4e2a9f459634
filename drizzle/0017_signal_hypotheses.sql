CREATE TABLE "hypothesis_scans" (
	"id" serial PRIMARY KEY NOT NULL,
	"analysis_id" integer NOT NULL,
	"model_version_id" integer NOT NULL,
	"label" varchar(200) DEFAULT '' NOT NULL,
	"options" jsonb NOT NULL,
	"regions_in_fit" text[] DEFAULT '{}'::text[] NOT NULL,
	"state" "fit_state" DEFAULT 'queued' NOT NULL,
	"progress" double precision DEFAULT 0 NOT NULL,
	"stage" varchar(100) DEFAULT '' NOT NULL,
	"failure" text,
	"result" jsonb,
	"workers" jsonb,
	"coordinated_by" varchar(200),
	"created_by_id" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"started_at" timestamp with time zone,
	"finished_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "signal_hypotheses" (
	"id" serial PRIMARY KEY NOT NULL,
	"analysis_id" integer NOT NULL,
	"key" varchar(64) NOT NULL,
	"label" varchar(200) DEFAULT '' NOT NULL,
	"value" double precision NOT NULL,
	"templates" jsonb NOT NULL,
	"effects" jsonb DEFAULT '[]'::jsonb NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "analyses" ADD COLUMN "hypothesis_parameter" jsonb;--> statement-breakpoint
ALTER TABLE "hypothesis_scans" ADD CONSTRAINT "hypothesis_scans_analysis_id_analyses_id_fk" FOREIGN KEY ("analysis_id") REFERENCES "public"."analyses"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "hypothesis_scans" ADD CONSTRAINT "hypothesis_scans_model_version_id_model_versions_id_fk" FOREIGN KEY ("model_version_id") REFERENCES "public"."model_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "hypothesis_scans" ADD CONSTRAINT "hypothesis_scans_created_by_id_users_id_fk" FOREIGN KEY ("created_by_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "signal_hypotheses" ADD CONSTRAINT "signal_hypotheses_analysis_id_analyses_id_fk" FOREIGN KEY ("analysis_id") REFERENCES "public"."analyses"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "hypothesis_scans_analysis" ON "hypothesis_scans" USING btree ("analysis_id");--> statement-breakpoint
CREATE UNIQUE INDEX "signal_hypotheses_analysis_key" ON "signal_hypotheses" USING btree ("analysis_id","key");