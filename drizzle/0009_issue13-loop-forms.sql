CREATE TABLE "return_replies" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"job_id" uuid NOT NULL,
	"signature_id" uuid NOT NULL,
	"revision" integer NOT NULL,
	"reply" text NOT NULL,
	"by_id" uuid NOT NULL,
	"by_name" text NOT NULL,
	"at" timestamp with time zone NOT NULL,
	CONSTRAINT "return_replies_signature_uq" UNIQUE("signature_id")
);
--> statement-breakpoint
CREATE TABLE "mail_schedules" (
	"name" text PRIMARY KEY NOT NULL,
	"last_slot" timestamp with time zone NOT NULL,
	"last_run_at" timestamp with time zone NOT NULL
);
--> statement-breakpoint
ALTER TABLE "instruments" ADD COLUMN "hazardous_medium" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "standards" ADD COLUMN "calibrating_lab" text DEFAULT '' NOT NULL;--> statement-breakpoint
ALTER TABLE "attachments" ADD COLUMN "removed_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "attachments" ADD COLUMN "removed_by" uuid;--> statement-breakpoint
ALTER TABLE "attachments" ADD COLUMN "removed_reason" text;--> statement-breakpoint
ALTER TABLE "return_replies" ADD CONSTRAINT "return_replies_job_id_jobs_id_fk" FOREIGN KEY ("job_id") REFERENCES "public"."jobs"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "return_replies" ADD CONSTRAINT "return_replies_signature_id_signatures_id_fk" FOREIGN KEY ("signature_id") REFERENCES "public"."signatures"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "return_replies" ADD CONSTRAINT "return_replies_by_id_users_id_fk" FOREIGN KEY ("by_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "return_replies_job_idx" ON "return_replies" USING btree ("job_id");--> statement-breakpoint
ALTER TABLE "attachments" ADD CONSTRAINT "attachments_removed_by_users_id_fk" FOREIGN KEY ("removed_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;