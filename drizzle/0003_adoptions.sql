CREATE TABLE "adoption_levels" (
	"id" text PRIMARY KEY NOT NULL,
	"slug" text NOT NULL,
	"name" text NOT NULL,
	"description" text DEFAULT '' NOT NULL,
	"amount_cents" integer NOT NULL,
	"currency" text DEFAULT 'usd' NOT NULL,
	"interval" text NOT NULL,
	"kind" text DEFAULT 'individual' NOT NULL,
	"goods" text DEFAULT '' NOT NULL,
	"fair_market_value_cents" integer DEFAULT 0 NOT NULL,
	"active" boolean DEFAULT true NOT NULL,
	"position" integer DEFAULT 0 NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "adoption_levels_slug_unique" UNIQUE("slug")
);
--> statement-breakpoint
CREATE TABLE "adoptions" (
	"id" text PRIMARY KEY NOT NULL,
	"patient_id" text NOT NULL,
	"level_id" text NOT NULL,
	"kind" text NOT NULL,
	"status" text DEFAULT 'pending' NOT NULL,
	"interval" text NOT NULL,
	"amount_cents" integer NOT NULL,
	"currency" text NOT NULL,
	"fair_market_value_cents" integer DEFAULT 0 NOT NULL,
	"supporter_id" text,
	"supporter_email" text NOT NULL,
	"supporter_name" text NOT NULL,
	"recipient_name" text,
	"recipient_email" text,
	"gift_message" text,
	"deliver_on" date,
	"recipient_id" text,
	"teacher_name" text,
	"school_name" text,
	"class_size" integer,
	"checkout_session_id" text,
	"customer_id" text,
	"subscription_id" text,
	"started_at" timestamp with time zone,
	"ended_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "adoptions_checkout_session_id_unique" UNIQUE("checkout_session_id"),
	CONSTRAINT "adoptions_subscription_id_unique" UNIQUE("subscription_id")
);
--> statement-breakpoint
CREATE TABLE "gifts" (
	"id" text PRIMARY KEY NOT NULL,
	"adoption_id" text NOT NULL,
	"status" text NOT NULL,
	"amount_cents" integer NOT NULL,
	"currency" text NOT NULL,
	"fee_cents" integer,
	"net_cents" integer,
	"refunded_cents" integer DEFAULT 0 NOT NULL,
	"fair_market_value_cents" integer DEFAULT 0 NOT NULL,
	"checkout_session_id" text,
	"payment_intent_id" text,
	"charge_id" text,
	"invoice_id" text,
	"subscription_id" text,
	"customer_id" text,
	"balance_transaction_id" text,
	"payout_id" text,
	"dispute_id" text,
	"dispute_status" text,
	"failure_message" text,
	"paid_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "gifts_charge_id_unique" UNIQUE("charge_id"),
	CONSTRAINT "gifts_invoice_id_unique" UNIQUE("invoice_id")
);
--> statement-breakpoint
CREATE TABLE "payouts" (
	"id" text PRIMARY KEY NOT NULL,
	"status" text NOT NULL,
	"amount_cents" integer NOT NULL,
	"currency" text NOT NULL,
	"arrival_date" timestamp with time zone,
	"failure_message" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "processor_events" (
	"id" text PRIMARY KEY NOT NULL,
	"type" text NOT NULL,
	"created_at" timestamp with time zone NOT NULL,
	"processed_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "adoptions" ADD CONSTRAINT "adoptions_patient_id_patients_id_fk" FOREIGN KEY ("patient_id") REFERENCES "public"."patients"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "adoptions" ADD CONSTRAINT "adoptions_level_id_adoption_levels_id_fk" FOREIGN KEY ("level_id") REFERENCES "public"."adoption_levels"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "adoptions" ADD CONSTRAINT "adoptions_supporter_id_users_id_fk" FOREIGN KEY ("supporter_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "adoptions" ADD CONSTRAINT "adoptions_recipient_id_users_id_fk" FOREIGN KEY ("recipient_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "gifts" ADD CONSTRAINT "gifts_adoption_id_adoptions_id_fk" FOREIGN KEY ("adoption_id") REFERENCES "public"."adoptions"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "adoptions_patient_idx" ON "adoptions" USING btree ("patient_id","status");--> statement-breakpoint
CREATE INDEX "adoptions_supporter_idx" ON "adoptions" USING btree ("supporter_id");--> statement-breakpoint
CREATE INDEX "adoptions_supporter_email_idx" ON "adoptions" USING btree ("supporter_email");--> statement-breakpoint
CREATE INDEX "gifts_adoption_idx" ON "gifts" USING btree ("adoption_id");--> statement-breakpoint
CREATE UNIQUE INDEX "gifts_payment_intent_unique" ON "gifts" USING btree ("payment_intent_id");