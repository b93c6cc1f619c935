CREATE TABLE "app_secrets" (
	"name" text PRIMARY KEY NOT NULL,
	"value" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "outbox" ADD COLUMN "patient_event_id" integer;--> statement-breakpoint
ALTER TABLE "patient_events" ADD COLUMN "message" text;--> statement-breakpoint
ALTER TABLE "patient_events" ADD COLUMN "approved_by" text;--> statement-breakpoint
ALTER TABLE "patient_events" ADD COLUMN "approved_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "patient_events" ADD COLUMN "outcome" text;--> statement-breakpoint
ALTER TABLE "patient_events" ADD COLUMN "recipient_count" integer;--> statement-breakpoint
ALTER TABLE "patient_events" ADD COLUMN "claimed_until" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "patient_events" ADD CONSTRAINT "patient_events_approved_by_users_id_fk" FOREIGN KEY ("approved_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "outbox_patient_event_idx" ON "outbox" USING btree ("patient_event_id");