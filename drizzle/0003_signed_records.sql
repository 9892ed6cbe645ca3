ALTER TABLE "signatures" ADD COLUMN "violation_acknowledged" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "signatures" ADD COLUMN "record" text;--> statement-breakpoint
ALTER TABLE "signatures" ADD COLUMN "record_signature" text;--> statement-breakpoint
ALTER TABLE "signatures" ADD COLUMN "key_fingerprint" text;