CREATE TABLE "review_sets" (
	"id" serial PRIMARY KEY NOT NULL,
	"analysis_id" integer NOT NULL,
	"model_version_id" integer NOT NULL,
	"label" varchar(200) DEFAULT '' NOT NULL,
	"blinded" boolean NOT NULL,
	"created_by_id" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "fits" ADD COLUMN "review_set_id" integer;--> statement-breakpoint
ALTER TABLE "fits" ADD COLUMN "variant" varchar(80);--> statement-breakpoint
ALTER TABLE "fits" ADD COLUMN "check_of_fit_id" integer;--> statement-breakpoint
ALTER TABLE "fits" ADD COLUMN "check_of_parameter" varchar(128);--> statement-breakpoint
ALTER TABLE "review_sets" ADD CONSTRAINT "review_sets_analysis_id_analyses_id_fk" FOREIGN KEY ("analysis_id") REFERENCES "public"."analyses"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "review_sets" ADD CONSTRAINT "review_sets_model_version_id_model_versions_id_fk" FOREIGN KEY ("model_version_id") REFERENCES "public"."model_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "review_sets" ADD CONSTRAINT "review_sets_created_by_id_users_id_fk" FOREIGN KEY ("created_by_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "fits" ADD CONSTRAINT "fits_review_set_id_review_sets_id_fk" FOREIGN KEY ("review_set_id") REFERENCES "public"."review_sets"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "fits" ADD CONSTRAINT "fits_check_of_fit_id_fits_id_fk" FOREIGN KEY ("check_of_fit_id") REFERENCES "public"."fits"("id") ON DELETE set null ON UPDATE no action;