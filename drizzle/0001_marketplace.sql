CREATE TYPE "public"."anode" AS ENUM('Cr', 'Fe', 'Co', 'Cu', 'Mo', 'Ag');--> statement-breakpoint
CREATE TYPE "public"."detector_kind" AS ENUM('point', 'strip_1d', 'area_2d');--> statement-breakpoint
CREATE TYPE "public"."lab_document_kind" AS ENUM('accreditation_certificate', 'radiation_licence', 'calibration_scan', 'other');--> statement-breakpoint
CREATE TYPE "public"."monochromation" AS ENUM('k_alpha_doublet', 'k_alpha1_only', 'k_beta_filtered');--> statement-breakpoint
CREATE TYPE "public"."order_state" AS ENUM('awaiting_payment', 'funds_held', 'samples_in_transit', 'samples_received', 'measuring', 'data_delivered', 'accepted', 'paid_out', 'cancelled', 'refused_on_arrival', 'disputed', 'resolved');--> statement-breakpoint
CREATE TYPE "public"."quality_level" AS ENUM('screening', 'standard', 'high_resolution');--> statement-breakpoint
CREATE TYPE "public"."quote_state" AS ENUM('sent', 'accepted', 'declined', 'withdrawn', 'lapsed');--> statement-breakpoint
CREATE TYPE "public"."request_state" AS ENUM('draft', 'open', 'awarded', 'expired', 'withdrawn');--> statement-breakpoint
CREATE TYPE "public"."request_visibility" AS ENUM('open', 'invited');--> statement-breakpoint
CREATE TYPE "public"."technique" AS ENUM('powder_reflection', 'powder_transmission', 'thin_film', 'single_crystal', 'total_scattering', 'neutron_powder');--> statement-breakpoint
CREATE TYPE "public"."vetting_state" AS ENUM('applied', 'in_review', 'approved', 'rejected', 'suspended');--> statement-breakpoint
CREATE TABLE "hazard_acceptance" (
	"lab_id" uuid PRIMARY KEY NOT NULL,
	"pictograms" text[] DEFAULT '{}'::text[] NOT NULL,
	"special_categories" text[] DEFAULT '{}'::text[] NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "hazard_acknowledgements" (
	"request_id" uuid NOT NULL,
	"lab_id" uuid NOT NULL,
	"user_id" uuid NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "hazard_acknowledgements_request_id_lab_id_pk" PRIMARY KEY("request_id","lab_id")
);
--> statement-breakpoint
CREATE TABLE "instruments" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"lab_id" uuid NOT NULL,
	"name" text NOT NULL,
	"technique" "technique" NOT NULL,
	"anode" "anode",
	"custom_wavelength" double precision,
	"monochromation" "monochromation" DEFAULT 'k_alpha_doublet' NOT NULL,
	"two_theta_min" double precision NOT NULL,
	"two_theta_max" double precision NOT NULL,
	"smallest_step" double precision NOT NULL,
	"detector" "detector_kind" NOT NULL,
	"energy_discrimination" boolean DEFAULT false NOT NULL,
	"sample_forms" text[] DEFAULT '{}'::text[] NOT NULL,
	"active" boolean DEFAULT true NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "lab_documents" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"lab_id" uuid NOT NULL,
	"kind" "lab_document_kind" NOT NULL,
	"file_name" text NOT NULL,
	"content_type" text NOT NULL,
	"size_bytes" integer NOT NULL,
	"storage_key" text NOT NULL,
	"sha256" text,
	"uploaded_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "labs" (
	"organisation_id" uuid PRIMARY KEY NOT NULL,
	"description" text DEFAULT '' NOT NULL,
	"vetting_state" "vetting_state" DEFAULT 'applied' NOT NULL,
	"accreditation_number" text,
	"accreditation_expiry" date,
	"licence_attestation" text,
	"licence_attested_by" uuid,
	"licence_attested_at" timestamp with time zone,
	"calibration_standard" text,
	"calibration_check" jsonb,
	"reviewed_by" uuid,
	"reviewed_at" timestamp with time zone,
	"review_note" text,
	"payout_account_id" text,
	"payouts_enabled" boolean DEFAULT false NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "order_events" (
	"id" bigserial PRIMARY KEY NOT NULL,
	"order_id" uuid NOT NULL,
	"from_state" "order_state",
	"to_state" "order_state" NOT NULL,
	"actor_user_id" uuid,
	"note" text DEFAULT '' NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "orders" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"request_id" uuid NOT NULL,
	"quote_id" uuid NOT NULL,
	"client_organisation_id" uuid NOT NULL,
	"lab_id" uuid NOT NULL,
	"state" "order_state" DEFAULT 'awaiting_payment' NOT NULL,
	"amount_minor" integer NOT NULL,
	"currency" text NOT NULL,
	"review_window_days" integer DEFAULT 7 NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "orders_request_unique" UNIQUE("request_id"),
	CONSTRAINT "orders_quote_unique" UNIQUE("quote_id")
);
--> statement-breakpoint
CREATE TABLE "price_lists" (
	"lab_id" uuid PRIMARY KEY NOT NULL,
	"currency" text DEFAULT 'EUR' NOT NULL,
	"per_sample_minor" jsonb DEFAULT '{}'::jsonb NOT NULL,
	"per_extra_temperature_point_minor" integer DEFAULT 0 NOT NULL,
	"per_instrument_hour_minor" integer DEFAULT 0 NOT NULL,
	"sample_preparation_minor" integer DEFAULT 0 NOT NULL,
	"hazardous_handling_minor" integer DEFAULT 0 NOT NULL,
	"rush_multiplier" numeric(4, 2) DEFAULT '1.50' NOT NULL,
	"turnaround_days" integer DEFAULT 10 NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "quotes" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"request_id" uuid NOT NULL,
	"lab_id" uuid NOT NULL,
	"instrument_id" uuid,
	"state" "quote_state" DEFAULT 'sent' NOT NULL,
	"line_items" jsonb NOT NULL,
	"total_minor" integer NOT NULL,
	"currency" text NOT NULL,
	"valid_until" timestamp with time zone NOT NULL,
	"turnaround_days" integer NOT NULL,
	"notes" text DEFAULT '' NOT NULL,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"decided_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "request_invitations" (
	"request_id" uuid NOT NULL,
	"lab_id" uuid NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "request_invitations_request_id_lab_id_pk" PRIMARY KEY("request_id","lab_id")
);
--> statement-breakpoint
CREATE TABLE "requests" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"organisation_id" uuid NOT NULL,
	"created_by" uuid,
	"title" text NOT NULL,
	"technique" "technique" DEFAULT 'powder_reflection' NOT NULL,
	"state" "request_state" DEFAULT 'draft' NOT NULL,
	"draft_step" text DEFAULT 'samples' NOT NULL,
	"range_kind" text DEFAULT 'two_theta' NOT NULL,
	"range_min" double precision,
	"range_max" double precision,
	"preferred_source" text DEFAULT 'any' NOT NULL,
	"temperature_points_k" double precision[] DEFAULT '{}'::double precision[] NOT NULL,
	"atmosphere" text DEFAULT 'air' NOT NULL,
	"quality" "quality_level" DEFAULT 'standard' NOT NULL,
	"deadline" date,
	"budget_minor" integer,
	"currency" text DEFAULT 'EUR' NOT NULL,
	"visibility" "request_visibility" DEFAULT 'open' NOT NULL,
	"opened_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "sample_stages" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"instrument_id" uuid NOT NULL,
	"name" text NOT NULL,
	"min_temperature_k" real NOT NULL,
	"max_temperature_k" real NOT NULL,
	"atmospheres" text[] DEFAULT '{}'::text[] NOT NULL
);
--> statement-breakpoint
CREATE TABLE "samples" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"request_id" uuid NOT NULL,
	"position" integer DEFAULT 0 NOT NULL,
	"label" text NOT NULL,
	"formula" text NOT NULL,
	"elements" text[] DEFAULT '{}'::text[] NOT NULL,
	"form" text DEFAULT 'powder' NOT NULL,
	"mass_mg" double precision,
	"expected_phase" text,
	"crystal_system" text,
	"centering" text,
	"cell_a" double precision,
	"cell_b" double precision,
	"cell_c" double precision,
	"cell_alpha" double precision,
	"cell_beta" double precision,
	"cell_gamma" double precision,
	"ghs_pictograms" text[] DEFAULT '{}'::text[] NOT NULL,
	"h_statements" text[] DEFAULT '{}'::text[] NOT NULL,
	"special_hazards" jsonb DEFAULT '[]'::jsonb NOT NULL,
	"handling_notes" text,
	"after_measurement" text DEFAULT 'return' NOT NULL,
	"sds_file_name" text,
	"sds_storage_key" text,
	"sds_size_bytes" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "hazard_acceptance" ADD CONSTRAINT "hazard_acceptance_lab_id_labs_organisation_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("organisation_id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "hazard_acknowledgements" ADD CONSTRAINT "hazard_acknowledgements_request_id_requests_id_fk" FOREIGN KEY ("request_id") REFERENCES "public"."requests"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "hazard_acknowledgements" ADD CONSTRAINT "hazard_acknowledgements_lab_id_labs_organisation_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("organisation_id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "hazard_acknowledgements" ADD CONSTRAINT "hazard_acknowledgements_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "instruments" ADD CONSTRAINT "instruments_lab_id_labs_organisation_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("organisation_id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "lab_documents" ADD CONSTRAINT "lab_documents_lab_id_labs_organisation_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("organisation_id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "lab_documents" ADD CONSTRAINT "lab_documents_uploaded_by_users_id_fk" FOREIGN KEY ("uploaded_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "labs" ADD CONSTRAINT "labs_organisation_id_organisations_id_fk" FOREIGN KEY ("organisation_id") REFERENCES "public"."organisations"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "labs" ADD CONSTRAINT "labs_licence_attested_by_users_id_fk" FOREIGN KEY ("licence_attested_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "labs" ADD CONSTRAINT "labs_reviewed_by_users_id_fk" FOREIGN KEY ("reviewed_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "order_events" ADD CONSTRAINT "order_events_order_id_orders_id_fk" FOREIGN KEY ("order_id") REFERENCES "public"."orders"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "order_events" ADD CONSTRAINT "order_events_actor_user_id_users_id_fk" FOREIGN KEY ("actor_user_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "orders" ADD CONSTRAINT "orders_request_id_requests_id_fk" FOREIGN KEY ("request_id") REFERENCES "public"."requests"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "orders" ADD CONSTRAINT "orders_quote_id_quotes_id_fk" FOREIGN KEY ("quote_id") REFERENCES "public"."quotes"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "orders" ADD CONSTRAINT "orders_client_organisation_id_organisations_id_fk" FOREIGN KEY ("client_organisation_id") REFERENCES "public"."organisations"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "orders" ADD CONSTRAINT "orders_lab_id_labs_organisation_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("organisation_id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "price_lists" ADD CONSTRAINT "price_lists_lab_id_labs_organisation_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("organisation_id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "quotes" ADD CONSTRAINT "quotes_request_id_requests_id_fk" FOREIGN KEY ("request_id") REFERENCES "public"."requests"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "quotes" ADD CONSTRAINT "quotes_lab_id_labs_organisation_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("organisation_id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "quotes" ADD CONSTRAINT "quotes_instrument_id_instruments_id_fk" FOREIGN KEY ("instrument_id") REFERENCES "public"."instruments"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "quotes" ADD CONSTRAINT "quotes_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "request_invitations" ADD CONSTRAINT "request_invitations_request_id_requests_id_fk" FOREIGN KEY ("request_id") REFERENCES "public"."requests"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "request_invitations" ADD CONSTRAINT "request_invitations_lab_id_labs_organisation_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("organisation_id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "requests" ADD CONSTRAINT "requests_organisation_id_organisations_id_fk" FOREIGN KEY ("organisation_id") REFERENCES "public"."organisations"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "requests" ADD CONSTRAINT "requests_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sample_stages" ADD CONSTRAINT "sample_stages_instrument_id_instruments_id_fk" FOREIGN KEY ("instrument_id") REFERENCES "public"."instruments"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "samples" ADD CONSTRAINT "samples_request_id_requests_id_fk" FOREIGN KEY ("request_id") REFERENCES "public"."requests"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "instruments_lab_idx" ON "instruments" USING btree ("lab_id");--> statement-breakpoint
CREATE INDEX "instruments_anode_idx" ON "instruments" USING btree ("anode");--> statement-breakpoint
CREATE INDEX "lab_documents_lab_idx" ON "lab_documents" USING btree ("lab_id");--> statement-breakpoint
CREATE INDEX "labs_vetting_state_idx" ON "labs" USING btree ("vetting_state");--> statement-breakpoint
CREATE INDEX "order_events_order_idx" ON "order_events" USING btree ("order_id","created_at");--> statement-breakpoint
CREATE INDEX "orders_client_idx" ON "orders" USING btree ("client_organisation_id","state");--> statement-breakpoint
CREATE INDEX "orders_lab_idx" ON "orders" USING btree ("lab_id","state");--> statement-breakpoint
CREATE INDEX "quotes_request_idx" ON "quotes" USING btree ("request_id");--> statement-breakpoint
CREATE INDEX "quotes_lab_idx" ON "quotes" USING btree ("lab_id","state");--> statement-breakpoint
CREATE INDEX "requests_org_state_idx" ON "requests" USING btree ("organisation_id","state");--> statement-breakpoint
CREATE INDEX "requests_state_idx" ON "requests" USING btree ("state");--> statement-breakpoint
CREATE INDEX "sample_stages_instrument_idx" ON "sample_stages" USING btree ("instrument_id");--> statement-breakpoint
CREATE INDEX "samples_request_idx" ON "samples" USING btree ("request_id");