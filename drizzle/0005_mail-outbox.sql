CREATE TABLE "outbox_messages" (
	"id" uuid PRIMARY KEY NOT NULL,
	"received_at" timestamp with time zone NOT NULL,
	"from_address" text NOT NULL,
	"to" jsonb NOT NULL,
	"subject" text NOT NULL,
	"text" text NOT NULL,
	"html" text,
	"message_id" text,
	"raw" text NOT NULL
);
--> statement-breakpoint
CREATE INDEX "outbox_messages_received_idx" ON "outbox_messages" USING btree ("received_at");