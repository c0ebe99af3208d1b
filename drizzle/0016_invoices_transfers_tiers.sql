CREATE TABLE "document_number_counters" (
	"series" text PRIMARY KEY NOT NULL,
	"last_seq" integer NOT NULL
);
--> statement-breakpoint
CREATE TABLE "invoices" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"kind" text NOT NULL,
	"number" text NOT NULL,
	"series" text NOT NULL,
	"seq" integer NOT NULL,
	"issuer_organisation_id" uuid,
	"recipient_organisation_id" uuid NOT NULL,
	"order_id" uuid,
	"credits_invoice_id" uuid,
	"period" text,
	"currency" text NOT NULL,
	"net_minor" integer NOT NULL,
	"tax_minor" integer NOT NULL,
	"total_minor" integer NOT NULL,
	"document" jsonb NOT NULL,
	"source_key" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "invoices_kind" CHECK ("invoices"."kind" in ('invoice', 'credit_note', 'fee_invoice'))
);
--> statement-breakpoint
ALTER TABLE "payments" ALTER COLUMN "checkout_session_id" DROP NOT NULL;--> statement-breakpoint
ALTER TABLE "orders" ADD COLUMN "tax_minor" integer DEFAULT 0 NOT NULL;--> statement-breakpoint
ALTER TABLE "orders" ADD COLUMN "tax_rate_bps" integer DEFAULT 0 NOT NULL;--> statement-breakpoint
ALTER TABLE "orders" ADD COLUMN "tax_treatment" text;--> statement-breakpoint
ALTER TABLE "payments" ADD COLUMN "method" text DEFAULT 'card' NOT NULL;--> statement-breakpoint
ALTER TABLE "payments" ADD COLUMN "customer_id" text;--> statement-breakpoint
ALTER TABLE "payments" ADD COLUMN "received_minor" integer DEFAULT 0 NOT NULL;--> statement-breakpoint
ALTER TABLE "payments" ADD COLUMN "bank_instructions" jsonb;--> statement-breakpoint
ALTER TABLE "payments" ADD COLUMN "reminded_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "price_lists" ADD COLUMN "tiers" jsonb DEFAULT '{}'::jsonb NOT NULL;--> statement-breakpoint
ALTER TABLE "invoices" ADD CONSTRAINT "invoices_issuer_organisation_id_organisations_id_fk" FOREIGN KEY ("issuer_organisation_id") REFERENCES "public"."organisations"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "invoices" ADD CONSTRAINT "invoices_recipient_organisation_id_organisations_id_fk" FOREIGN KEY ("recipient_organisation_id") REFERENCES "public"."organisations"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "invoices" ADD CONSTRAINT "invoices_order_id_orders_id_fk" FOREIGN KEY ("order_id") REFERENCES "public"."orders"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "invoices_number_idx" ON "invoices" USING btree ("number");--> statement-breakpoint
CREATE UNIQUE INDEX "invoices_series_seq_idx" ON "invoices" USING btree ("series","seq");--> statement-breakpoint
CREATE UNIQUE INDEX "invoices_source_idx" ON "invoices" USING btree ("source_key");--> statement-breakpoint
CREATE INDEX "invoices_order_idx" ON "invoices" USING btree ("order_id");--> statement-breakpoint
CREATE INDEX "invoices_issued_idx" ON "invoices" USING btree ("created_at");--> statement-breakpoint
CREATE INDEX "invoices_recipient_idx" ON "invoices" USING btree ("recipient_organisation_id","created_at");--> statement-breakpoint
CREATE INDEX "invoices_issuer_idx" ON "invoices" USING btree ("issuer_organisation_id","created_at");