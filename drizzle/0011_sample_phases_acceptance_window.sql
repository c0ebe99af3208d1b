CREATE TABLE "sample_phases" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"sample_id" uuid NOT NULL,
	"position" integer DEFAULT 0 NOT NULL,
	"role" text NOT NULL,
	"name" text,
	"crystal_system" text NOT NULL,
	"centering" text NOT NULL,
	"cell_a" double precision NOT NULL,
	"cell_b" double precision NOT NULL,
	"cell_c" double precision NOT NULL,
	"cell_alpha" double precision NOT NULL,
	"cell_beta" double precision NOT NULL,
	"cell_gamma" double precision NOT NULL,
	CONSTRAINT "sample_phases_role" CHECK ("sample_phases"."role" in ('expected', 'candidate'))
);
--> statement-breakpoint
ALTER TABLE "samples" ADD COLUMN "acceptance_window" jsonb;--> statement-breakpoint
ALTER TABLE "sample_phases" ADD CONSTRAINT "sample_phases_sample_id_samples_id_fk" FOREIGN KEY ("sample_id") REFERENCES "public"."samples"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "sample_phases_sample_idx" ON "sample_phases" USING btree ("sample_id");