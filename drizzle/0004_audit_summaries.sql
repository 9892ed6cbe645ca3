CREATE TABLE "audit_summaries" (
	"audit_id" uuid PRIMARY KEY NOT NULL,
	"summary" jsonb NOT NULL,
	"cycle_count" integer NOT NULL
);
--> statement-breakpoint
ALTER TABLE "audit_summaries" ADD CONSTRAINT "audit_summaries_audit_id_audits_id_fk" FOREIGN KEY ("audit_id") REFERENCES "public"."audits"("id") ON DELETE cascade ON UPDATE no action;