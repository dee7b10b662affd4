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
ALTER TABLE "benches" ADD CONSTRAINT "benches_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "benches" ADD CONSTRAINT "benches_revoked_by_users_id_fk" FOREIGN KEY ("revoked_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;