CREATE TABLE "mail_schedules" (
	"name" text PRIMARY KEY NOT NULL,
	"last_slot" timestamp with time zone NOT NULL,
	"last_run_at" timestamp with time zone NOT NULL
);
--> statement-breakpoint
ALTER TABLE "instruments" ADD COLUMN "hazardous_medium" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "standards" ADD COLUMN "calibrating_lab" text DEFAULT '' NOT NULL;