CREATE TABLE "instrument_calibrations" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"instrument_id" uuid NOT NULL,
	"lab_id" uuid NOT NULL,
	"standard" text NOT NULL,
	"file_name" text NOT NULL,
	"storage_key" text,
	"size_bytes" integer,
	"sha256" text,
	"check" jsonb,
	"deviation_a" double precision,
	"zero_shift" double precision,
	"caglioti_u" double precision,
	"caglioti_v" double precision,
	"caglioti_w" double precision,
	"passed" boolean NOT NULL,
	"rules_broken" integer[] DEFAULT '{}'::integer[] NOT NULL,
	"measured_at" timestamp with time zone NOT NULL,
	"uploaded_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "material_lots" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"material_id" uuid NOT NULL,
	"sample_id" uuid,
	"order_id" uuid,
	"check_id" uuid,
	"lot_code" text NOT NULL,
	"measured_at" timestamp with time zone NOT NULL,
	"cell" jsonb,
	"esd" jsonb,
	"verdict" text,
	"within_window" boolean,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "materials" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"organisation_id" uuid NOT NULL,
	"product_code" text NOT NULL,
	"name" text NOT NULL,
	"formula" text NOT NULL,
	"form" text DEFAULT 'powder' NOT NULL,
	"expected_phase" text,
	"crystal_system" text,
	"centering" text,
	"cell_a" double precision,
	"cell_b" double precision,
	"cell_c" double precision,
	"cell_alpha" double precision,
	"cell_beta" double precision,
	"cell_gamma" double precision,
	"further_phases" jsonb DEFAULT '[]'::jsonb NOT NULL,
	"acceptance_window" jsonb,
	"technique" "technique" DEFAULT 'powder_reflection' NOT NULL,
	"range_min" double precision,
	"range_max" double precision,
	"quality" "quality_level" DEFAULT 'standard' NOT NULL,
	"preferred_source" text DEFAULT 'any' NOT NULL,
	"mass_mg" double precision,
	"ghs_pictograms" text[] DEFAULT '{}'::text[] NOT NULL,
	"h_statements" text[] DEFAULT '{}'::text[] NOT NULL,
	"special_hazards" jsonb DEFAULT '[]'::jsonb NOT NULL,
	"handling_notes" text,
	"after_measurement" text DEFAULT 'return' NOT NULL,
	"sds_file_name" text,
	"sds_storage_key" text,
	"sds_size_bytes" integer,
	"baseline_first_lot" integer,
	"baseline_last_lot" integer,
	"qc_user_ids" uuid[] DEFAULT '{}'::uuid[] NOT NULL,
	"created_by" uuid,
	"archived_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "standing_agreements" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"number" text NOT NULL,
	"client_organisation_id" uuid NOT NULL,
	"lab_id" uuid NOT NULL,
	"material_id" uuid NOT NULL,
	"source_quote_id" uuid,
	"instrument_id" uuid,
	"line_items" jsonb NOT NULL,
	"price_per_lot_minor" integer NOT NULL,
	"currency" text NOT NULL,
	"turnaround_days" integer NOT NULL,
	"starts_on" date NOT NULL,
	"ends_on" date NOT NULL,
	"budget_cap_minor" integer NOT NULL,
	"notice_days" integer DEFAULT 14 NOT NULL,
	"state" text DEFAULT 'proposed' NOT NULL,
	"notice_given_at" timestamp with time zone,
	"notice_given_by" uuid,
	"notice_reason" text,
	"ending_at" timestamp with time zone,
	"ended_at" timestamp with time zone,
	"ended_because" text,
	"created_by" uuid,
	"agreed_by" uuid,
	"agreed_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "standing_agreements_state" CHECK ("standing_agreements"."state" in ('proposed', 'active', 'ending', 'ended'))
);
--> statement-breakpoint
ALTER TABLE "instruments" ADD COLUMN "calibration_interval_days" integer DEFAULT 30 NOT NULL;--> statement-breakpoint
ALTER TABLE "instruments" ADD COLUMN "calibration_standard" text;--> statement-breakpoint
ALTER TABLE "instruments" ADD COLUMN "calibration_state" text DEFAULT 'none' NOT NULL;--> statement-breakpoint
ALTER TABLE "instruments" ADD COLUMN "calibration_due_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "orders" ADD COLUMN "agreement_id" uuid;--> statement-breakpoint
ALTER TABLE "samples" ADD COLUMN "material_id" uuid;--> statement-breakpoint
ALTER TABLE "samples" ADD COLUMN "lot_code" text;--> statement-breakpoint
ALTER TABLE "instrument_calibrations" ADD CONSTRAINT "instrument_calibrations_instrument_id_instruments_id_fk" FOREIGN KEY ("instrument_id") REFERENCES "public"."instruments"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "instrument_calibrations" ADD CONSTRAINT "instrument_calibrations_lab_id_labs_organisation_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("organisation_id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "instrument_calibrations" ADD CONSTRAINT "instrument_calibrations_uploaded_by_users_id_fk" FOREIGN KEY ("uploaded_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "material_lots" ADD CONSTRAINT "material_lots_material_id_materials_id_fk" FOREIGN KEY ("material_id") REFERENCES "public"."materials"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "material_lots" ADD CONSTRAINT "material_lots_sample_id_samples_id_fk" FOREIGN KEY ("sample_id") REFERENCES "public"."samples"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "material_lots" ADD CONSTRAINT "material_lots_order_id_orders_id_fk" FOREIGN KEY ("order_id") REFERENCES "public"."orders"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "material_lots" ADD CONSTRAINT "material_lots_check_id_scan_checks_id_fk" FOREIGN KEY ("check_id") REFERENCES "public"."scan_checks"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "materials" ADD CONSTRAINT "materials_organisation_id_organisations_id_fk" FOREIGN KEY ("organisation_id") REFERENCES "public"."organisations"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "materials" ADD CONSTRAINT "materials_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "standing_agreements" ADD CONSTRAINT "standing_agreements_client_organisation_id_organisations_id_fk" FOREIGN KEY ("client_organisation_id") REFERENCES "public"."organisations"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "standing_agreements" ADD CONSTRAINT "standing_agreements_lab_id_labs_organisation_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("organisation_id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "standing_agreements" ADD CONSTRAINT "standing_agreements_material_id_materials_id_fk" FOREIGN KEY ("material_id") REFERENCES "public"."materials"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "standing_agreements" ADD CONSTRAINT "standing_agreements_source_quote_id_quotes_id_fk" FOREIGN KEY ("source_quote_id") REFERENCES "public"."quotes"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "standing_agreements" ADD CONSTRAINT "standing_agreements_instrument_id_instruments_id_fk" FOREIGN KEY ("instrument_id") REFERENCES "public"."instruments"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "standing_agreements" ADD CONSTRAINT "standing_agreements_notice_given_by_users_id_fk" FOREIGN KEY ("notice_given_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "standing_agreements" ADD CONSTRAINT "standing_agreements_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "standing_agreements" ADD CONSTRAINT "standing_agreements_agreed_by_users_id_fk" FOREIGN KEY ("agreed_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "instrument_calibrations_instrument_idx" ON "instrument_calibrations" USING btree ("instrument_id","measured_at");--> statement-breakpoint
CREATE INDEX "material_lots_material_idx" ON "material_lots" USING btree ("material_id","measured_at");--> statement-breakpoint
CREATE UNIQUE INDEX "material_lots_check_idx" ON "material_lots" USING btree ("check_id");--> statement-breakpoint
CREATE UNIQUE INDEX "materials_org_code_idx" ON "materials" USING btree ("organisation_id","product_code");--> statement-breakpoint
CREATE UNIQUE INDEX "standing_agreements_number_idx" ON "standing_agreements" USING btree ("number");--> statement-breakpoint
CREATE INDEX "standing_agreements_client_idx" ON "standing_agreements" USING btree ("client_organisation_id","state");--> statement-breakpoint
CREATE INDEX "standing_agreements_lab_idx" ON "standing_agreements" USING btree ("lab_id","state");--> statement-breakpoint
CREATE INDEX "standing_agreements_material_idx" ON "standing_agreements" USING btree ("material_id");--> statement-breakpoint
ALTER TABLE "orders" ADD CONSTRAINT "orders_agreement_id_standing_agreements_id_fk" FOREIGN KEY ("agreement_id") REFERENCES "public"."standing_agreements"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "samples" ADD CONSTRAINT "samples_material_id_materials_id_fk" FOREIGN KEY ("material_id") REFERENCES "public"."materials"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "samples_material_idx" ON "samples" USING btree ("material_id");