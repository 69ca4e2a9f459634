CREATE TABLE "work_claims" (
	"run" varchar(100) NOT NULL,
	"shard" integer NOT NULL,
	"worker" varchar(200) NOT NULL,
	"claimed_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "work_claims_run_shard_worker_pk" PRIMARY KEY("run","shard","worker")
);
--> statement-breakpoint
CREATE TABLE "worker_processes" (
	"name" varchar(200) PRIMARY KEY NOT NULL,
	"threads" integer NOT NULL,
	"started_at" timestamp with time zone DEFAULT now() NOT NULL,
	"seen_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "fits" ADD COLUMN "coordinated_by" varchar(200);--> statement-breakpoint
ALTER TABLE "toy_runs" ADD COLUMN "coordinated_by" varchar(200);