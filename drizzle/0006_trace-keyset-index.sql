DROP INDEX "samples_run_idx";--> statement-breakpoint
CREATE INDEX "samples_run_time_idx" ON "samples" USING btree ("run_id","wall_ms","seq");