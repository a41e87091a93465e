CREATE TABLE "background_uploads" (
	"sha256" text PRIMARY KEY NOT NULL,
	"shape" jsonb NOT NULL,
	"min_height" integer NOT NULL,
	"max_height" integer NOT NULL,
	"mean_height" real NOT NULL,
	"source" text NOT NULL,
	"levels" jsonb,
	"height_counts" jsonb NOT NULL,
	"count_above" bigint DEFAULT 0 NOT NULL,
	"uploaded_by_id" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "series" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"lab_id" uuid NOT NULL,
	"author_id" uuid NOT NULL,
	"title" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "runs" ADD COLUMN "series_id" uuid;--> statement-breakpoint
ALTER TABLE "runs" ADD COLUMN "outcome_mailed_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "background_uploads" ADD CONSTRAINT "background_uploads_uploaded_by_id_users_id_fk" FOREIGN KEY ("uploaded_by_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "series" ADD CONSTRAINT "series_lab_id_labs_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "series" ADD CONSTRAINT "series_author_id_users_id_fk" FOREIGN KEY ("author_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "series_lab_idx" ON "series" USING btree ("lab_id");--> statement-breakpoint
ALTER TABLE "runs" ADD CONSTRAINT "runs_series_id_series_id_fk" FOREIGN KEY ("series_id") REFERENCES "public"."series"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "runs_series_idx" ON "runs" USING btree ("series_id");