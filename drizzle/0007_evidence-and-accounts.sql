CREATE TABLE "record_snapshots" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"job_id" uuid NOT NULL,
	"revision" integer NOT NULL,
	"snapshot" jsonb NOT NULL,
	"hash" text NOT NULL,
	"frozen_at" timestamp with time zone NOT NULL,
	CONSTRAINT "record_snapshots_job_revision_uq" UNIQUE("job_id","revision")
);
--> statement-breakpoint
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
CREATE TABLE "benches" (
	"id" text PRIMARY KEY NOT NULL,
	"kind" text DEFAULT 'agent' NOT NULL,
	"label" text NOT NULL,
	"token_hash" text NOT NULL,
	"token_hint" text NOT NULL,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"revoked_at" timestamp with time zone,
	"revoked_by" uuid,
	CONSTRAINT "benches_token_hash_unique" UNIQUE("token_hash")
);
--> statement-breakpoint
CREATE TABLE "forward_senders" (
	"key" text PRIMARY KEY NOT NULL,
	"bench_id" text NOT NULL,
	"batch_seq" bigint NOT NULL,
	"last_seq" bigint NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "users" ADD COLUMN "must_change_password" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "users" ADD COLUMN "failed_sign_ins" integer DEFAULT 0 NOT NULL;--> statement-breakpoint
ALTER TABLE "users" ADD COLUMN "sign_in_locked_until" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "users" ADD COLUMN "signature_failures" integer DEFAULT 0 NOT NULL;--> statement-breakpoint
ALTER TABLE "users" ADD COLUMN "signing_locked_until" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "samples" ADD COLUMN "source_kind" text DEFAULT 'port' NOT NULL;--> statement-breakpoint
ALTER TABLE "samples" ADD COLUMN "source_id" text;--> statement-breakpoint
ALTER TABLE "samples" ADD COLUMN "client_wall_ms" double precision;--> statement-breakpoint
ALTER TABLE "record_snapshots" ADD CONSTRAINT "record_snapshots_job_id_jobs_id_fk" FOREIGN KEY ("job_id") REFERENCES "public"."jobs"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "benches" ADD CONSTRAINT "benches_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "benches" ADD CONSTRAINT "benches_revoked_by_users_id_fk" FOREIGN KEY ("revoked_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "sample_quarantine_unacknowledged_idx" ON "sample_quarantine" USING btree ("acknowledged_at");