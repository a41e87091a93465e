ALTER TYPE "public"."purchase_status" ADD VALUE 'abandoned';--> statement-breakpoint
ALTER TABLE "credit_purchases" ADD COLUMN "expires_at" timestamp with time zone;--> statement-breakpoint
-- checkouts opened before this column took Stripe's default lifetime of 24 hours
UPDATE "credit_purchases" SET "expires_at" = "created_at" + interval '24 hours' WHERE "status" = 'open';
