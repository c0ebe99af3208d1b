CREATE TABLE "order_number_counters" (
	"organisation_id" uuid NOT NULL,
	"year" integer NOT NULL,
	"last_seq" integer NOT NULL,
	CONSTRAINT "order_number_counters_organisation_id_year_pk" PRIMARY KEY("organisation_id","year")
);
--> statement-breakpoint
ALTER TABLE "orders" ADD COLUMN "number" text;--> statement-breakpoint
ALTER TABLE "organisations" ADD COLUMN "order_prefix" text;--> statement-breakpoint
ALTER TABLE "order_number_counters" ADD CONSTRAINT "order_number_counters_organisation_id_organisations_id_fk" FOREIGN KEY ("organisation_id") REFERENCES "public"."organisations"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "organisations_order_prefix_idx" ON "organisations" USING btree ("order_prefix");--> statement-breakpoint
-- Backfill (written by hand after drizzle-kit generate): every organisation that already has orders gets a prefix
-- by the rule of derivePrefix in app/domain/order-number.ts (initials of its words, A–Z, two to four letters; a
-- one-word name its first three letters; ORG without Latin letters; HCW2, HCW3 … when taken), oldest first.
DO $$
DECLARE
	org record;
	plain text;
	words text[];
	initials text;
	base text;
	candidate text;
	n integer;
BEGIN
	FOR org IN
		SELECT o.id, o.name FROM organisations o
		WHERE o.order_prefix IS NULL AND EXISTS (SELECT 1 FROM orders WHERE orders.client_organisation_id = o.id)
		ORDER BY o.created_at, o.id
	LOOP
		plain := translate(org.name,
			'ÀÁÂÃÄÅàáâãäåÇçČčÈÉÊËèéêëĚěÌÍÎÏìíîïÑñŇňÒÓÔÕÖòóôõöØøŘřŠšÙÚÛÜùúûüŮůÝýÿŽžŁłĐđ',
			'AAAAAAaaaaaaCcCcEEEEeeeeEeIIIIiiiiNnNnOOOOOoooooOoRrSsUUUUuuuuUuYyyZzLlDd');
		plain := replace(replace(replace(replace(plain, 'Æ', 'AE'), 'æ', 'ae'), 'ß', 'ss'), 'Œ', 'OE');
		words := ARRAY(
			SELECT w FROM regexp_split_to_table(plain, '[^A-Za-z]+') AS w
			WHERE w <> '' AND lower(w) NOT IN ('and', 'of', 'the', 'for')
		);
		initials := left(upper(array_to_string(ARRAY(SELECT left(w, 1) FROM unnest(words) AS w), '')), 4);
		IF length(initials) >= 2 THEN
			base := initials;
		ELSIF length(array_to_string(words, '')) >= 2 THEN
			base := left(upper(array_to_string(words, '')), 3);
		ELSE
			base := 'ORG';
		END IF;
		n := 1;
		candidate := base;
		WHILE EXISTS (SELECT 1 FROM organisations WHERE order_prefix = candidate) LOOP
			n := n + 1;
			candidate := base || n;
		END LOOP;
		UPDATE organisations SET order_prefix = candidate WHERE id = org.id;
	END LOOP;
END $$;--> statement-breakpoint
-- Existing orders are numbered per client organisation and year (UTC) in the order they were made.
UPDATE "orders" SET "number" = numbered.number
FROM (
	SELECT o.id,
		org.order_prefix || '-' || y.year || '-' || CASE WHEN y.seq < 10000 THEN lpad(y.seq::text, 4, '0') ELSE y.seq::text END AS number
	FROM orders o
	JOIN organisations org ON org.id = o.client_organisation_id
	JOIN (
		SELECT id, extract(year FROM created_at AT TIME ZONE 'UTC')::integer AS year,
			row_number() OVER (PARTITION BY client_organisation_id, extract(year FROM created_at AT TIME ZONE 'UTC') ORDER BY created_at, id) AS seq
		FROM orders
	) y ON y.id = o.id
) AS numbered
WHERE "orders"."id" = numbered.id;--> statement-breakpoint
INSERT INTO "order_number_counters" ("organisation_id", "year", "last_seq")
SELECT client_organisation_id, extract(year FROM created_at AT TIME ZONE 'UTC')::integer, count(*)::integer
FROM orders
GROUP BY client_organisation_id, extract(year FROM created_at AT TIME ZONE 'UTC')::integer;--> statement-breakpoint
ALTER TABLE "orders" ALTER COLUMN "number" SET NOT NULL;--> statement-breakpoint
ALTER TABLE "orders" ADD CONSTRAINT "orders_number_unique" UNIQUE("number");
