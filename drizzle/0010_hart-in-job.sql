CREATE TABLE "job_hart" (
	"job_id" uuid PRIMARY KEY NOT NULL,
	"as_found" jsonb,
	"as_left" jsonb,
	"mismatches" jsonb DEFAULT '[]'::jsonb NOT NULL,
	"resolution" jsonb,
	"writes" jsonb DEFAULT '[]'::jsonb NOT NULL,
	"trims" jsonb DEFAULT '[]'::jsonb NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "job_hart" ADD CONSTRAINT "job_hart_job_id_jobs_id_fk" FOREIGN KEY ("job_id") REFERENCES "public"."jobs"("id") ON DELETE no action ON UPDATE no action;