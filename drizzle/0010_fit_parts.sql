CREATE TABLE "fit_parts" (
	"fit_id" integer NOT NULL,
	"part" varchar(20) NOT NULL,
	"encoding" varchar(10) NOT NULL,
	"data" "bytea" NOT NULL,
	CONSTRAINT "fit_parts_fit_id_part_pk" PRIMARY KEY("fit_id","part")
);
--> statement-breakpoint
ALTER TABLE "fit_parts" ADD CONSTRAINT "fit_parts_fit_id_fits_id_fk" FOREIGN KEY ("fit_id") REFERENCES "public"."fits"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
-- Results stored before: their correlation and information move to fit_parts as JSON text.
INSERT INTO fit_parts (fit_id, part, encoding, data)
SELECT f.id, p.part, 'identity', convert_to((f.result -> p.part)::text, 'UTF8')
FROM fits f, (VALUES ('correlation'), ('information')) AS p(part)
WHERE f.result IS NOT NULL AND f.result ? p.part;
--> statement-breakpoint
UPDATE fits SET result = result - 'correlation' - 'information' WHERE result IS NOT NULL AND (result ? 'correlation' OR result ? 'information');
