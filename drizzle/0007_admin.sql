ALTER TABLE "labs" ADD COLUMN "suspended_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "labs" ADD COLUMN "suspended_reason" text;--> statement-breakpoint
ALTER TABLE "labs" ADD COLUMN "free_allowance" integer;