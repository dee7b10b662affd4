CREATE TABLE "sample_quarantine" (
	"seq" bigint PRIMARY KEY NOT NULL,
	"bench_id" text NOT NULL,
	"device" text NOT NULL,
	"run_id" text,
	"raw_json" text NOT NULL,
	"row_json" text NOT NULL,
	"wall_ms" double precision NOT NULL,
	"reason" text NOT NULL,
	"at" timestamp with time zone DEFAULT now() NOT NULL,
	"acknowledged_at" timestamp with time zone,
	"acknowledged_by" uuid
);
--> statement-breakpoint
ALTER TABLE "samples" ADD COLUMN "source_kind" text DEFAULT 'port' NOT NULL;--> statement-breakpoint
ALTER TABLE "samples" ADD COLUMN "source_id" text;--> statement-breakpoint
ALTER TABLE "samples" ADD COLUMN "client_wall_ms" double precision;--> statement-breakpoint
CREATE INDEX "sample_quarantine_unacknowledged_idx" ON "sample_quarantine" USING btree ("acknowledged_at");