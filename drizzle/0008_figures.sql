CREATE TYPE "public"."figure_version_status" AS ENUM('queued', 'printing', 'ready', 'failed');--> statement-breakpoint
CREATE TABLE "figure_versions" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"figure_id" uuid NOT NULL,
	"number" integer NOT NULL,
	"spec" jsonb NOT NULL,
	"formats" jsonb NOT NULL,
	"status" "figure_version_status" DEFAULT 'queued' NOT NULL,
	"stage" text,
	"files" jsonb DEFAULT '[]'::jsonb NOT NULL,
	"error" text,
	"ordered_by_id" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"started_at" timestamp with time zone,
	"finished_at" timestamp with time zone,
	"mailed_at" timestamp with time zone
);
--> statement-breakpoint
ALTER TABLE "figures" ADD COLUMN "spec" jsonb;--> statement-breakpoint
ALTER TABLE "figures" ADD COLUMN "updated_at" timestamp with time zone DEFAULT now() NOT NULL;--> statement-breakpoint
ALTER TABLE "figure_versions" ADD CONSTRAINT "figure_versions_figure_id_figures_id_fk" FOREIGN KEY ("figure_id") REFERENCES "public"."figures"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "figure_versions" ADD CONSTRAINT "figure_versions_ordered_by_id_users_id_fk" FOREIGN KEY ("ordered_by_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "figure_versions_number_idx" ON "figure_versions" USING btree ("figure_id","number");