CREATE TABLE "journeys" (
	"patient_id" text PRIMARY KEY NOT NULL,
	"geojson" jsonb NOT NULL,
	"etag" text NOT NULL,
	"cutoff_date" date NOT NULL,
	"computed_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "position_imports" (
	"id" text PRIMARY KEY NOT NULL,
	"patient_id" text NOT NULL,
	"transmitter_id" text NOT NULL,
	"file_name" text NOT NULL,
	"format" text NOT NULL,
	"rows_read" integer NOT NULL,
	"rows_added" integer NOT NULL,
	"rows_already_stored" integer NOT NULL,
	"rows_refused" integer NOT NULL,
	"problems" jsonb DEFAULT '[]'::jsonb NOT NULL,
	"uploaded_by" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "positions" (
	"id" bigserial PRIMARY KEY NOT NULL,
	"patient_id" text NOT NULL,
	"transmitter_id" text NOT NULL,
	"observed_at" timestamp with time zone NOT NULL,
	"latitude" double precision NOT NULL,
	"longitude" double precision NOT NULL,
	"location_class" text NOT NULL,
	"semi_major_m" real,
	"semi_minor_m" real,
	"orientation_deg" real,
	"error_radius_m" real,
	"import_id" text,
	"status" text DEFAULT 'pending' NOT NULL,
	"reject_reason" text,
	"reject_detail" text
);
--> statement-breakpoint
CREATE TABLE "tracking_profiles" (
	"patient_id" text PRIMARY KEY NOT NULL,
	"delay_days" integer DEFAULT 7 NOT NULL,
	"cell_deg" text DEFAULT '0.1' NOT NULL,
	"minimum_class" text DEFAULT 'B' NOT NULL,
	"max_speed_ms" real,
	"computed_at" timestamp with time zone,
	"raw_count" integer DEFAULT 0 NOT NULL,
	"kept_count" integer DEFAULT 0 NOT NULL,
	"rejected_count" integer DEFAULT 0 NOT NULL,
	"last_fix_at" timestamp with time zone,
	"silent_since" timestamp with time zone,
	"public_distance_metres" double precision DEFAULT 0 NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "tracking_profiles_delay_min" CHECK ("tracking_profiles"."delay_days" >= 7)
);
--> statement-breakpoint
ALTER TABLE "organisation_settings" ADD COLUMN "waypoint_step_km" integer DEFAULT 500 NOT NULL;--> statement-breakpoint
ALTER TABLE "organisation_settings" ADD COLUMN "silence_days" integer DEFAULT 30 NOT NULL;--> statement-breakpoint
ALTER TABLE "organisation_settings" ADD COLUMN "inland_metres" integer DEFAULT 5000 NOT NULL;--> statement-breakpoint
ALTER TABLE "journeys" ADD CONSTRAINT "journeys_patient_id_patients_id_fk" FOREIGN KEY ("patient_id") REFERENCES "public"."patients"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "position_imports" ADD CONSTRAINT "position_imports_patient_id_patients_id_fk" FOREIGN KEY ("patient_id") REFERENCES "public"."patients"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "position_imports" ADD CONSTRAINT "position_imports_uploaded_by_users_id_fk" FOREIGN KEY ("uploaded_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "positions" ADD CONSTRAINT "positions_patient_id_patients_id_fk" FOREIGN KEY ("patient_id") REFERENCES "public"."patients"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "positions" ADD CONSTRAINT "positions_import_id_position_imports_id_fk" FOREIGN KEY ("import_id") REFERENCES "public"."position_imports"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "tracking_profiles" ADD CONSTRAINT "tracking_profiles_patient_id_patients_id_fk" FOREIGN KEY ("patient_id") REFERENCES "public"."patients"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "position_imports_patient_idx" ON "position_imports" USING btree ("patient_id","created_at");--> statement-breakpoint
CREATE UNIQUE INDEX "positions_same_fix_unique" ON "positions" USING btree ("transmitter_id","observed_at","latitude","longitude","location_class");--> statement-breakpoint
CREATE INDEX "positions_patient_time_idx" ON "positions" USING btree ("patient_id","observed_at");