ALTER TABLE "orders" ADD COLUMN "platform_fee_bps" integer DEFAULT 800 NOT NULL;--> statement-breakpoint
ALTER TABLE "orders" ADD COLUMN "delivered_at" timestamp with time zone;