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
ALTER TABLE "record_snapshots" ADD CONSTRAINT "record_snapshots_job_id_jobs_id_fk" FOREIGN KEY ("job_id") REFERENCES "public"."jobs"("id") ON DELETE no action ON UPDATE no action;