CREATE TABLE "counters" (
	"name" text PRIMARY KEY NOT NULL,
	"value" integer NOT NULL
);
--> statement-breakpoint
CREATE TABLE "mail_preferences" (
	"email" text PRIMARY KEY NOT NULL,
	"homecoming" boolean DEFAULT true NOT NULL,
	"waypoint" boolean DEFAULT true NOT NULL,
	"field_note" boolean DEFAULT true NOT NULL,
	"last_signal" boolean DEFAULT true NOT NULL,
	"keep_following" boolean DEFAULT false NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "receipts" (
	"id" text PRIMARY KEY NOT NULL,
	"number" integer NOT NULL,
	"gift_id" text,
	"status" text DEFAULT 'issued' NOT NULL,
	"kind" text DEFAULT 'original' NOT NULL,
	"replaces_id" text,
	"country" text DEFAULT 'US' NOT NULL,
	"donor_name" text NOT NULL,
	"donor_email" text NOT NULL,
	"description" text NOT NULL,
	"goods_description" text DEFAULT '' NOT NULL,
	"goods_token_item" boolean DEFAULT false NOT NULL,
	"amount_cents" integer NOT NULL,
	"currency" text NOT NULL,
	"fair_market_value_cents" integer DEFAULT 0 NOT NULL,
	"deductible_cents" integer NOT NULL,
	"gift_date" date NOT NULL,
	"issued_at" timestamp with time zone DEFAULT now() NOT NULL,
	"voided_at" timestamp with time zone,
	CONSTRAINT "receipts_number_unique" UNIQUE("number")
);
--> statement-breakpoint
ALTER TABLE "adoption_levels" ADD COLUMN "goods_token_item" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "adoptions" ADD COLUMN "cancel_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "adoptions" ADD COLUMN "subscription_synced_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "adoptions" ADD COLUMN "gift_notified_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "adoptions" ADD COLUMN "claim_token_hash" text;--> statement-breakpoint
ALTER TABLE "receipts" ADD CONSTRAINT "receipts_gift_id_gifts_id_fk" FOREIGN KEY ("gift_id") REFERENCES "public"."gifts"("id") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "receipts_gift_idx" ON "receipts" USING btree ("gift_id");--> statement-breakpoint
CREATE INDEX "receipts_donor_email_idx" ON "receipts" USING btree ("donor_email");--> statement-breakpoint
ALTER TABLE "adoptions" ADD CONSTRAINT "adoptions_claim_token_hash_unique" UNIQUE("claim_token_hash");