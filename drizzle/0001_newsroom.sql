CREATE TABLE "media" (
	"id" text PRIMARY KEY NOT NULL,
	"alt" text DEFAULT '' NOT NULL,
	"width" integer NOT NULL,
	"height" integer NOT NULL,
	"original_name" text,
	"uploaded_by" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "media_variants" (
	"media_id" text NOT NULL,
	"width" integer NOT NULL,
	"format" text NOT NULL,
	"height" integer NOT NULL,
	"bytes" "bytea" NOT NULL,
	"etag" text NOT NULL,
	CONSTRAINT "media_variants_media_id_width_format_pk" PRIMARY KEY("media_id","width","format")
);
--> statement-breakpoint
CREATE TABLE "patient_events" (
	"id" serial PRIMARY KEY NOT NULL,
	"patient_id" text NOT NULL,
	"kind" text NOT NULL,
	"dedupe_key" text NOT NULL,
	"payload" jsonb DEFAULT '{}'::jsonb NOT NULL,
	"occurred_at" timestamp with time zone DEFAULT now() NOT NULL,
	"processed_at" timestamp with time zone,
	CONSTRAINT "patient_events_dedupe_key_unique" UNIQUE("dedupe_key")
);
--> statement-breakpoint
CREATE TABLE "patient_photos" (
	"patient_id" text NOT NULL,
	"media_id" text NOT NULL,
	"position" integer DEFAULT 0 NOT NULL,
	"caption" text,
	CONSTRAINT "patient_photos_patient_id_media_id_pk" PRIMARY KEY("patient_id","media_id")
);
--> statement-breakpoint
CREATE TABLE "patient_status_log" (
	"id" serial PRIMARY KEY NOT NULL,
	"patient_id" text NOT NULL,
	"from_status" text,
	"to_status" text NOT NULL,
	"note" text,
	"changed_by" text,
	"changed_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "releases" (
	"id" text PRIMARY KEY NOT NULL,
	"patient_id" text NOT NULL,
	"release_on" date NOT NULL,
	"public_area" text NOT NULL,
	"habitat" text NOT NULL,
	"site_latitude" numeric(9, 6),
	"site_longitude" numeric(9, 6),
	"site_notes" text,
	"authorisation_ref" text,
	"vet_cleared_by" text,
	"vet_cleared_on" date,
	"transmitter_attached" boolean DEFAULT false NOT NULL,
	"done_at" timestamp with time zone,
	"done_by" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "stories" (
	"id" text PRIMARY KEY NOT NULL,
	"slug" text NOT NULL,
	"title" text NOT NULL,
	"kind" text NOT NULL,
	"summary" text DEFAULT '' NOT NULL,
	"body_markdown" text DEFAULT '' NOT NULL,
	"body_html" text DEFAULT '' NOT NULL,
	"hero_media_id" text,
	"status" text DEFAULT 'draft' NOT NULL,
	"author_id" text,
	"approved_by" text,
	"approved_at" timestamp with time zone,
	"publish_at" timestamp with time zone,
	"published_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "stories_slug_unique" UNIQUE("slug")
);
--> statement-breakpoint
CREATE TABLE "story_patients" (
	"story_id" text NOT NULL,
	"patient_id" text NOT NULL,
	CONSTRAINT "story_patients_story_id_patient_id_pk" PRIMARY KEY("story_id","patient_id")
);
--> statement-breakpoint
ALTER TABLE "organisation_settings" ADD COLUMN "story_review_required" boolean DEFAULT true NOT NULL;--> statement-breakpoint
ALTER TABLE "media" ADD CONSTRAINT "media_uploaded_by_users_id_fk" FOREIGN KEY ("uploaded_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "media_variants" ADD CONSTRAINT "media_variants_media_id_media_id_fk" FOREIGN KEY ("media_id") REFERENCES "public"."media"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "patient_events" ADD CONSTRAINT "patient_events_patient_id_patients_id_fk" FOREIGN KEY ("patient_id") REFERENCES "public"."patients"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "patient_photos" ADD CONSTRAINT "patient_photos_patient_id_patients_id_fk" FOREIGN KEY ("patient_id") REFERENCES "public"."patients"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "patient_photos" ADD CONSTRAINT "patient_photos_media_id_media_id_fk" FOREIGN KEY ("media_id") REFERENCES "public"."media"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "patient_status_log" ADD CONSTRAINT "patient_status_log_patient_id_patients_id_fk" FOREIGN KEY ("patient_id") REFERENCES "public"."patients"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "patient_status_log" ADD CONSTRAINT "patient_status_log_changed_by_users_id_fk" FOREIGN KEY ("changed_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "releases" ADD CONSTRAINT "releases_patient_id_patients_id_fk" FOREIGN KEY ("patient_id") REFERENCES "public"."patients"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "releases" ADD CONSTRAINT "releases_done_by_users_id_fk" FOREIGN KEY ("done_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "stories" ADD CONSTRAINT "stories_hero_media_id_media_id_fk" FOREIGN KEY ("hero_media_id") REFERENCES "public"."media"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "stories" ADD CONSTRAINT "stories_author_id_users_id_fk" FOREIGN KEY ("author_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "stories" ADD CONSTRAINT "stories_approved_by_users_id_fk" FOREIGN KEY ("approved_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "story_patients" ADD CONSTRAINT "story_patients_story_id_stories_id_fk" FOREIGN KEY ("story_id") REFERENCES "public"."stories"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "story_patients" ADD CONSTRAINT "story_patients_patient_id_patients_id_fk" FOREIGN KEY ("patient_id") REFERENCES "public"."patients"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "patient_events_unprocessed_idx" ON "patient_events" USING btree ("processed_at","id");--> statement-breakpoint
CREATE INDEX "patient_status_log_patient_idx" ON "patient_status_log" USING btree ("patient_id","changed_at");--> statement-breakpoint
CREATE INDEX "releases_patient_idx" ON "releases" USING btree ("patient_id");--> statement-breakpoint
CREATE INDEX "stories_status_idx" ON "stories" USING btree ("status","published_at");--> statement-breakpoint
CREATE INDEX "stories_due_idx" ON "stories" USING btree ("status","publish_at");--> statement-breakpoint
CREATE INDEX "story_patients_patient_idx" ON "story_patients" USING btree ("patient_id");