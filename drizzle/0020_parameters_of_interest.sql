CREATE TABLE "parameters_of_interest" (
	"id" serial PRIMARY KEY NOT NULL,
	"analysis_id" integer NOT NULL,
	"key" varchar(64) NOT NULL,
	"label" varchar(200) DEFAULT '' NOT NULL,
	"start" double precision DEFAULT 1 NOT NULL,
	"min" double precision DEFAULT -10 NOT NULL,
	"max" double precision DEFAULT 20 NOT NULL,
	"targets" jsonb NOT NULL,
	"position" integer DEFAULT 0 NOT NULL
);
--> statement-breakpoint
ALTER TABLE "parameters_of_interest" ADD CONSTRAINT "parameters_of_interest_analysis_id_analyses_id_fk" FOREIGN KEY ("analysis_id") REFERENCES "public"."analyses"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "parameters_of_interest_analysis_key" ON "parameters_of_interest" USING btree ("analysis_id","key");--> statement-breakpoint
-- the model's response carries the parameters of interest: a change announces "model_changed" (drizzle/0005)
CREATE TRIGGER parameters_of_interest_model_changed AFTER INSERT OR UPDATE OR DELETE ON parameters_of_interest FOR EACH ROW EXECUTE FUNCTION announce_model_change();
