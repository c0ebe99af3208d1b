ALTER TABLE "instruments" ADD COLUMN "sample_holder" text;--> statement-breakpoint
ALTER TABLE "instruments" ADD COLUMN "caglioti_u" double precision;--> statement-breakpoint
ALTER TABLE "instruments" ADD COLUMN "caglioti_v" double precision;--> statement-breakpoint
ALTER TABLE "instruments" ADD COLUMN "caglioti_w" double precision;--> statement-breakpoint
ALTER TABLE "instruments" ADD COLUMN "profile_source" text;--> statement-breakpoint
ALTER TABLE "order_files" ADD COLUMN "scan_format" text;--> statement-breakpoint
ALTER TABLE "order_files" ADD COLUMN "scan_info" jsonb;--> statement-breakpoint
ALTER TABLE "instruments" ADD CONSTRAINT "instruments_profile_whole" CHECK (("instruments"."caglioti_u" is null) = ("instruments"."caglioti_v" is null) and ("instruments"."caglioti_v" is null) = ("instruments"."caglioti_w" is null));