CREATE TABLE "payout_lines" (
	"id" text PRIMARY KEY NOT NULL,
	"payout_id" text NOT NULL,
	"type" text NOT NULL,
	"reporting_category" text NOT NULL,
	"amount_cents" integer NOT NULL,
	"fee_cents" integer NOT NULL,
	"net_cents" integer NOT NULL,
	"currency" text NOT NULL,
	"source_id" text,
	"charge_id" text,
	"gift_id" text,
	"created_at" timestamp with time zone NOT NULL
);
--> statement-breakpoint
CREATE TABLE "reconciliation_notes" (
	"payout_id" text NOT NULL,
	"issue_key" text NOT NULL,
	"note" text NOT NULL,
	"author_id" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "reconciliation_notes_payout_id_issue_key_pk" PRIMARY KEY("payout_id","issue_key")
);
--> statement-breakpoint
ALTER TABLE "payouts" ADD COLUMN "reconciled_by" text;--> statement-breakpoint
ALTER TABLE "payouts" ADD COLUMN "reconciled_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "payouts" ADD COLUMN "reconcile_note" text;--> statement-breakpoint
ALTER TABLE "payout_lines" ADD CONSTRAINT "payout_lines_gift_id_gifts_id_fk" FOREIGN KEY ("gift_id") REFERENCES "public"."gifts"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "reconciliation_notes" ADD CONSTRAINT "reconciliation_notes_author_id_users_id_fk" FOREIGN KEY ("author_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "payout_lines_payout_idx" ON "payout_lines" USING btree ("payout_id");--> statement-breakpoint
CREATE INDEX "payout_lines_charge_idx" ON "payout_lines" USING btree ("charge_id");--> statement-breakpoint
ALTER TABLE "payouts" ADD CONSTRAINT "payouts_reconciled_by_users_id_fk" FOREIGN KEY ("reconciled_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;