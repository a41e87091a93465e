ALTER TABLE "runs" ADD COLUMN "artifacts_expired_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "runs" ADD COLUMN "artifacts_cleared_at" timestamp with time zone;--> statement-breakpoint
CREATE INDEX "audit_events_action_subject_idx" ON "audit_events" USING btree ("action","subject_id");--> statement-breakpoint
-- Append-only also against TRUNCATE, which row triggers (migration 0001) do not see.
CREATE TRIGGER audit_events_no_truncate
  BEFORE TRUNCATE ON audit_events
  FOR EACH STATEMENT EXECUTE FUNCTION audit_events_refuse_change();
