CREATE TABLE "dispute_evidence" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"dispute_id" uuid NOT NULL,
	"side" text NOT NULL,
	"file_name" text NOT NULL,
	"content_type" text NOT NULL,
	"size_bytes" integer NOT NULL,
	"storage_key" text NOT NULL,
	"uploaded_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "dispute_evidence_side" CHECK ("dispute_evidence"."side" in ('client', 'lab'))
);
--> statement-breakpoint
CREATE TABLE "message_reads" (
	"user_id" uuid NOT NULL,
	"thread_key" text NOT NULL,
	"last_read_at" timestamp with time zone NOT NULL,
	CONSTRAINT "message_reads_user_id_thread_key_pk" PRIMARY KEY("user_id","thread_key")
);
--> statement-breakpoint
CREATE TABLE "messages" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"request_id" uuid NOT NULL,
	"lab_id" uuid NOT NULL,
	"order_id" uuid,
	"author_user_id" uuid,
	"author_organisation_id" uuid,
	"body" text NOT NULL,
	"attachment_name" text,
	"attachment_key" text,
	"attachment_size_bytes" integer,
	"attachment_content_type" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "request_revisions" (
	"request_id" uuid NOT NULL,
	"revision" integer NOT NULL,
	"summary" text NOT NULL,
	"changed_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "request_revisions_request_id_revision_pk" PRIMARY KEY("request_id","revision")
);
--> statement-breakpoint
CREATE TABLE "sample_receipts" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"order_id" uuid NOT NULL,
	"sample_id" uuid NOT NULL,
	"condition" text NOT NULL,
	"seal_intact" boolean NOT NULL,
	"amount" double precision,
	"amount_unit" text,
	"storage_place" text DEFAULT '' NOT NULL,
	"photo_name" text,
	"photo_key" text,
	"photo_size_bytes" integer,
	"photo_content_type" text,
	"refusal_reason" text,
	"note" text DEFAULT '' NOT NULL,
	"received_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "disputes" ADD COLUMN "lab_statement" text;--> statement-breakpoint
ALTER TABLE "disputes" ADD COLUMN "lab_statement_by" uuid;--> statement-breakpoint
ALTER TABLE "disputes" ADD COLUMN "lab_statement_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "order_files" ADD COLUMN "conditions" jsonb;--> statement-breakpoint
ALTER TABLE "order_files" ADD COLUMN "archived_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "order_files" ADD COLUMN "archived_by" uuid;--> statement-breakpoint
ALTER TABLE "orders" ADD COLUMN "due_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "quotes" ADD COLUMN "request_revision" integer DEFAULT 1 NOT NULL;--> statement-breakpoint
ALTER TABLE "requests" ADD COLUMN "revision" integer DEFAULT 1 NOT NULL;--> statement-breakpoint
ALTER TABLE "requests" ADD COLUMN "repeat_of" uuid;--> statement-breakpoint
ALTER TABLE "requests" ADD COLUMN "closed_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "dispute_evidence" ADD CONSTRAINT "dispute_evidence_dispute_id_disputes_id_fk" FOREIGN KEY ("dispute_id") REFERENCES "public"."disputes"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "dispute_evidence" ADD CONSTRAINT "dispute_evidence_uploaded_by_users_id_fk" FOREIGN KEY ("uploaded_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "message_reads" ADD CONSTRAINT "message_reads_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "messages" ADD CONSTRAINT "messages_request_id_requests_id_fk" FOREIGN KEY ("request_id") REFERENCES "public"."requests"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "messages" ADD CONSTRAINT "messages_lab_id_labs_organisation_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("organisation_id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "messages" ADD CONSTRAINT "messages_order_id_orders_id_fk" FOREIGN KEY ("order_id") REFERENCES "public"."orders"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "messages" ADD CONSTRAINT "messages_author_user_id_users_id_fk" FOREIGN KEY ("author_user_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "messages" ADD CONSTRAINT "messages_author_organisation_id_organisations_id_fk" FOREIGN KEY ("author_organisation_id") REFERENCES "public"."organisations"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "request_revisions" ADD CONSTRAINT "request_revisions_request_id_requests_id_fk" FOREIGN KEY ("request_id") REFERENCES "public"."requests"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "request_revisions" ADD CONSTRAINT "request_revisions_changed_by_users_id_fk" FOREIGN KEY ("changed_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sample_receipts" ADD CONSTRAINT "sample_receipts_order_id_orders_id_fk" FOREIGN KEY ("order_id") REFERENCES "public"."orders"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sample_receipts" ADD CONSTRAINT "sample_receipts_sample_id_samples_id_fk" FOREIGN KEY ("sample_id") REFERENCES "public"."samples"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sample_receipts" ADD CONSTRAINT "sample_receipts_received_by_users_id_fk" FOREIGN KEY ("received_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "dispute_evidence_dispute_idx" ON "dispute_evidence" USING btree ("dispute_id");--> statement-breakpoint
CREATE INDEX "messages_request_lab_idx" ON "messages" USING btree ("request_id","lab_id","created_at");--> statement-breakpoint
CREATE INDEX "messages_order_idx" ON "messages" USING btree ("order_id","created_at");--> statement-breakpoint
CREATE UNIQUE INDEX "sample_receipts_sample_idx" ON "sample_receipts" USING btree ("order_id","sample_id");--> statement-breakpoint
ALTER TABLE "disputes" ADD CONSTRAINT "disputes_lab_statement_by_users_id_fk" FOREIGN KEY ("lab_statement_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "order_files" ADD CONSTRAINT "order_files_archived_by_users_id_fk" FOREIGN KEY ("archived_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "audit_log_actor_idx" ON "audit_log" USING btree ("actor_user_id","at");--> statement-breakpoint
-- Backfill (written by hand after drizzle-kit generate): an order whose samples have arrived owes its data the
-- quote's turnaround after the first receipt on its timeline.
UPDATE "orders" o SET "due_at" = r.at + make_interval(days => q."turnaround_days")
FROM "quotes" q, (SELECT "order_id", min("created_at") AS at FROM "order_events" WHERE "to_state" = 'samples_received' GROUP BY "order_id") r
WHERE q."id" = o."quote_id" AND r."order_id" = o."id";
