ALTER TABLE "notifications" ADD COLUMN "organisation_id" uuid;--> statement-breakpoint
ALTER TABLE "outbox_messages" ADD COLUMN "digest" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "users" ADD COLUMN "daily_digest" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "notifications" ADD CONSTRAINT "notifications_organisation_id_organisations_id_fk" FOREIGN KEY ("organisation_id") REFERENCES "public"."organisations"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
-- Backfill (written by hand after drizzle-kit generate): a notice about an order belongs to the side of the order
-- its reader is a member of (the client's first, as notify writes it); a quote notice to the request's client.
-- Notices that cannot be placed stay without an organisation and show in every one of the person's bells.
UPDATE "notifications" n SET "organisation_id" = o."client_organisation_id"
FROM "orders" o
WHERE n."order_id" = o."id" AND n."organisation_id" IS NULL
  AND EXISTS (SELECT 1 FROM "memberships" m WHERE m."user_id" = n."user_id" AND m."organisation_id" = o."client_organisation_id");--> statement-breakpoint
UPDATE "notifications" n SET "organisation_id" = o."lab_id"
FROM "orders" o
WHERE n."order_id" = o."id" AND n."organisation_id" IS NULL
  AND EXISTS (SELECT 1 FROM "memberships" m WHERE m."user_id" = n."user_id" AND m."organisation_id" = o."lab_id");--> statement-breakpoint
UPDATE "notifications" n SET "organisation_id" = r."organisation_id"
FROM "requests" r
WHERE n."organisation_id" IS NULL AND n."kind" = 'quote_received' AND n."href" = '/client/requests/' || r."id"::text
  AND EXISTS (SELECT 1 FROM "memberships" m WHERE m."user_id" = n."user_id" AND m."organisation_id" = r."organisation_id");
