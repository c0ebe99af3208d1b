-- Each message carries its request's client organisation (filled in from the request for messages written
-- before), so that the unread count every workspace page shows reads one index per side (docs/performance.md).
ALTER TABLE "messages" ADD COLUMN "client_organisation_id" uuid;--> statement-breakpoint
UPDATE "messages" m SET "client_organisation_id" = r."organisation_id" FROM "requests" r WHERE r."id" = m."request_id";--> statement-breakpoint
ALTER TABLE "messages" ALTER COLUMN "client_organisation_id" SET NOT NULL;--> statement-breakpoint
ALTER TABLE "messages" ADD CONSTRAINT "messages_client_organisation_id_organisations_id_fk" FOREIGN KEY ("client_organisation_id") REFERENCES "public"."organisations"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "messages_lab_created_idx" ON "messages" USING btree ("lab_id","created_at");--> statement-breakpoint
CREATE INDEX "messages_client_created_idx" ON "messages" USING btree ("client_organisation_id","created_at");
