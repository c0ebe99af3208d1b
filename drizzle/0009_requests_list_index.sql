DROP INDEX "requests_org_state_idx";--> statement-breakpoint
CREATE INDEX "requests_org_state_created_idx" ON "requests" USING btree ("organisation_id","state","created_at" DESC NULLS LAST);