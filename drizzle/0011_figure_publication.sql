ALTER TABLE "figure_versions" ADD COLUMN "title" text;--> statement-breakpoint
ALTER TABLE "figure_versions" ADD COLUMN "caption" text;--> statement-breakpoint
ALTER TABLE "figure_versions" ADD COLUMN "published_at" timestamp with time zone;--> statement-breakpoint
-- versions printed before this migration: the title is the figure's now (the one before is not kept), the caption the one printed
UPDATE "figure_versions" v SET "title" = f."title", "caption" = coalesce(v."spec"->'caption'->>'text', '') FROM "figures" f WHERE f."id" = v."figure_id";--> statement-breakpoint
-- readers of a published figure saw every ready version: those stay published, so no link they followed goes dark
UPDATE "figure_versions" v SET "published_at" = f."published_at" FROM "figures" f WHERE f."id" = v."figure_id" AND f."published_at" IS NOT NULL AND v."status" = 'ready';
