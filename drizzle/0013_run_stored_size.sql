ALTER TABLE "runs" ADD COLUMN "stored_bytes" bigint;--> statement-breakpoint
ALTER TABLE "runs" ADD COLUMN "stored_objects" integer;
-- No default: rows written before this migration have an unknown size (null) until the storage
-- report lists their prefix once; the API writes 0 for every new run.
