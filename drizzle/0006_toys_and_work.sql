CREATE TABLE "toy_runs" (
	"id" serial PRIMARY KEY NOT NULL,
	"analysis_id" integer NOT NULL,
	"fit_id" integer NOT NULL,
	"label" varchar(200) DEFAULT '' NOT NULL,
	"count" integer NOT NULL,
	"hypothesis" jsonb NOT NULL,
	"seed" integer NOT NULL,
	"state" "fit_state" DEFAULT 'queued' NOT NULL,
	"progress" double precision DEFAULT 0 NOT NULL,
	"stage" varchar(100) DEFAULT '' NOT NULL,
	"failure" text,
	"workers" jsonb,
	"summary" jsonb,
	"created_by_id" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"started_at" timestamp with time zone,
	"finished_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "work_inputs" (
	"run" varchar(100) PRIMARY KEY NOT NULL,
	"data" "bytea" NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "work_results" (
	"run" varchar(100) NOT NULL,
	"shard" integer NOT NULL,
	"worker" varchar(200) NOT NULL,
	"data" "bytea",
	"error" text,
	"attempts" integer DEFAULT 1 NOT NULL,
	"finished_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "work_results_run_shard_pk" PRIMARY KEY("run","shard")
);
--> statement-breakpoint
ALTER TABLE "fits" ADD COLUMN "workers" jsonb;--> statement-breakpoint
ALTER TABLE "toy_runs" ADD CONSTRAINT "toy_runs_analysis_id_analyses_id_fk" FOREIGN KEY ("analysis_id") REFERENCES "public"."analyses"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "toy_runs" ADD CONSTRAINT "toy_runs_fit_id_fits_id_fk" FOREIGN KEY ("fit_id") REFERENCES "public"."fits"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "toy_runs" ADD CONSTRAINT "toy_runs_created_by_id_users_id_fk" FOREIGN KEY ("created_by_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "toy_runs_fit" ON "toy_runs" USING btree ("fit_id");