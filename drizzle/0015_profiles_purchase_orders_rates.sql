CREATE TABLE "exchange_rates" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"base" text NOT NULL,
	"quote" text NOT NULL,
	"rate" numeric(18, 8) NOT NULL,
	"as_of" date NOT NULL,
	"source" text DEFAULT '' NOT NULL,
	"set_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "organisation_addresses" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"organisation_id" uuid NOT NULL,
	"kind" text NOT NULL,
	"label" text NOT NULL,
	"address" jsonb NOT NULL,
	"contact_name" text DEFAULT '' NOT NULL,
	"contact_phone" text DEFAULT '' NOT NULL,
	"opening_hours" text DEFAULT '' NOT NULL,
	"is_default" boolean DEFAULT false NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "organisation_addresses_kind" CHECK ("organisation_addresses"."kind" in ('receiving', 'shipping'))
);
--> statement-breakpoint
ALTER TABLE "orders" ADD COLUMN "purchase_order_number" text;--> statement-breakpoint
ALTER TABLE "orders" ADD COLUMN "purchase_order_file_name" text;--> statement-breakpoint
ALTER TABLE "orders" ADD COLUMN "purchase_order_file_key" text;--> statement-breakpoint
ALTER TABLE "organisations" ADD COLUMN "legal_name" text;--> statement-breakpoint
ALTER TABLE "organisations" ADD COLUMN "billing_address" jsonb;--> statement-breakpoint
ALTER TABLE "organisations" ADD COLUMN "tax_id" text;--> statement-breakpoint
ALTER TABLE "organisations" ADD COLUMN "invoice_email" text;--> statement-breakpoint
ALTER TABLE "organisations" ADD COLUMN "client_kind" text;--> statement-breakpoint
ALTER TABLE "organisations" ADD COLUMN "client_kind_confirmed_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "organisations" ADD COLUMN "client_kind_confirmed_by" uuid;--> statement-breakpoint
ALTER TABLE "organisations" ADD COLUMN "requires_purchase_order" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "exchange_rates" ADD CONSTRAINT "exchange_rates_set_by_users_id_fk" FOREIGN KEY ("set_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "organisation_addresses" ADD CONSTRAINT "organisation_addresses_organisation_id_organisations_id_fk" FOREIGN KEY ("organisation_id") REFERENCES "public"."organisations"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "exchange_rates_pair_idx" ON "exchange_rates" USING btree ("base","quote","as_of");--> statement-breakpoint
CREATE INDEX "organisation_addresses_org_idx" ON "organisation_addresses" USING btree ("organisation_id");