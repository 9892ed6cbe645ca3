CREATE TYPE "public"."engine_job_status" AS ENUM('queued', 'running', 'done', 'failed', 'cancelled');--> statement-breakpoint
CREATE TABLE "engine_jobs" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"kind" text NOT NULL,
	"lab_id" uuid NOT NULL,
	"scheme_id" uuid,
	"input" jsonb NOT NULL,
	"cache_key" text NOT NULL,
	"status" "engine_job_status" DEFAULT 'queued' NOT NULL,
	"progress" double precision DEFAULT 0 NOT NULL,
	"stage" text DEFAULT 'waiting for a worker' NOT NULL,
	"error" text,
	"attempts" integer DEFAULT 0 NOT NULL,
	"worked_by" text,
	"audit_id" uuid,
	"created_by" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	"finished_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "engine_results" (
	"cache_key" text PRIMARY KEY NOT NULL,
	"kind" text NOT NULL,
	"engine_version" text NOT NULL,
	"result" jsonb NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "engine_jobs" ADD CONSTRAINT "engine_jobs_lab_id_labs_id_fk" FOREIGN KEY ("lab_id") REFERENCES "public"."labs"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "engine_jobs" ADD CONSTRAINT "engine_jobs_scheme_id_schemes_id_fk" FOREIGN KEY ("scheme_id") REFERENCES "public"."schemes"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "engine_jobs" ADD CONSTRAINT "engine_jobs_audit_id_audits_id_fk" FOREIGN KEY ("audit_id") REFERENCES "public"."audits"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "engine_jobs" ADD CONSTRAINT "engine_jobs_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "engine_jobs_lab_scheme_idx" ON "engine_jobs" USING btree ("lab_id","scheme_id","created_at");--> statement-breakpoint
CREATE INDEX "engine_jobs_key_idx" ON "engine_jobs" USING btree ("cache_key");