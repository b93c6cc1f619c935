ALTER TABLE "gifts" ALTER COLUMN "adoption_id" DROP NOT NULL;--> statement-breakpoint
ALTER TABLE "gifts" ADD COLUMN "source" text DEFAULT 'processor' NOT NULL;--> statement-breakpoint
ALTER TABLE "gifts" ADD COLUMN "method" text;--> statement-breakpoint
ALTER TABLE "gifts" ADD COLUMN "reference" text;--> statement-breakpoint
ALTER TABLE "gifts" ADD COLUMN "donor_name" text;--> statement-breakpoint
ALTER TABLE "gifts" ADD COLUMN "donor_email" text;--> statement-breakpoint
ALTER TABLE "gifts" ADD COLUMN "recorded_by" text;--> statement-breakpoint
ALTER TABLE "gifts" ADD CONSTRAINT "gifts_recorded_by_users_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "gifts_paid_at_idx" ON "gifts" USING btree ("paid_at");--> statement-breakpoint
CREATE INDEX "gifts_donor_email_idx" ON "gifts" USING btree ("donor_email");--> statement-breakpoint
ALTER TABLE "gifts" ADD CONSTRAINT "gifts_source_shape" CHECK (("gifts"."source" = 'processor' AND "gifts"."adoption_id" IS NOT NULL) OR ("gifts"."source" = 'manual' AND "gifts"."donor_email" IS NOT NULL AND "gifts"."donor_name" IS NOT NULL));