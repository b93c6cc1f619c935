import { sql } from 'drizzle-orm';
import {
	bigserial,
	boolean,
	doublePrecision,
	check,
	customType,
	date,
	index,
	integer,
	jsonb,
	numeric,
	pgTable,
	primaryKey,
	real,
	serial,
	text,
	timestamp,
	uniqueIndex
} from 'drizzle-orm/pg-core';

import { ROLES, type Role } from '../../roles';
export { ROLES, type Role };

const timestamps = {
	createdAt: timestamp('created_at', { withTimezone: true, mode: 'date' }).notNull().defaultNow(),
	updatedAt: timestamp('updated_at', { withTimezone: true, mode: 'date' }).notNull().defaultNow()
};

export const users = pgTable(
	'users',
	{
		id: text('id').primaryKey(),
		email: text('email').notNull(),
		name: text('name').notNull(),
		passwordHash: text('password_hash'),
		emailVerified: boolean('email_verified').notNull().default(false),
		disabledAt: timestamp('disabled_at', { withTimezone: true, mode: 'date' }),
		...timestamps
	},
	(t) => [uniqueIndex('users_email_unique').on(sql`lower(${t.email})`)]
);

export const sessions = pgTable(
	'sessions',
	{
		id: text('id').primaryKey(),
		userId: text('user_id')
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		expiresAt: timestamp('expires_at', { withTimezone: true, mode: 'date' }).notNull()
	},
	(t) => [index('sessions_user_idx').on(t.userId)]
);

/** The roles a user holds; a user may hold several. */
export const roles = pgTable(
	'roles',
	{
		userId: text('user_id')
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		role: text('role', { enum: ROLES }).notNull(),
		grantedBy: text('granted_by').references(() => users.id, { onDelete: 'set null' }),
		grantedAt: timestamp('granted_at', { withTimezone: true, mode: 'date' }).notNull().defaultNow()
	},
	(t) => [
		primaryKey({ columns: [t.userId, t.role] }),
		check(
			'roles_role_known',
			sql`${t.role} in ('supporter','educator','tracker','development','admin')`
		)
	]
);

export const TOKEN_PURPOSES = ['sign_in_link', 'password_reset', 'invite'] as const;
export type TokenPurpose = (typeof TOKEN_PURPOSES)[number];

/** One-time tokens sent by e-mail. Only a SHA-256 of the token is stored. */
export const authTokens = pgTable(
	'auth_tokens',
	{
		tokenHash: text('token_hash').primaryKey(),
		userId: text('user_id')
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		purpose: text('purpose', { enum: TOKEN_PURPOSES }).notNull(),
		expiresAt: timestamp('expires_at', { withTimezone: true, mode: 'date' }).notNull(),
		usedAt: timestamp('used_at', { withTimezone: true, mode: 'date' }),
		createdAt: timestamp('created_at', { withTimezone: true, mode: 'date' }).notNull().defaultNow()
	},
	(t) => [index('auth_tokens_user_idx').on(t.userId)]
);

/** Failed sign-in counters, shared by every instance (rate-limiter-flexible's Drizzle store). */
export const rateLimits = pgTable('rate_limits', {
	key: text('key').primaryKey(),
	points: integer('points').notNull().default(0),
	expire: timestamp('expire', { withTimezone: true, mode: 'date' })
});

export const DISTANCE_UNITS = ['km', 'mi'] as const;
export type DistanceUnit = (typeof DISTANCE_UNITS)[number];

/** A single row (id = 1): who the organisation is, for pages, e-mails and receipts. */
export const organisationSettings = pgTable(
	'organisation_settings',
	{
		id: integer('id').primaryKey().default(1),
		displayName: text('display_name').notNull(),
		legalName: text('legal_name').notNull(),
		taxId: text('tax_id').notNull().default(''),
		postalAddress: text('postal_address').notNull().default(''),
		hotlineNumber: text('hotline_number').notNull().default(''),
		hotlineName: text('hotline_name').notNull().default(''),
		currency: text('currency').notNull().default('usd'),
		distanceUnit: text('distance_unit', { enum: DISTANCE_UNITS }).notNull().default('km'),
		/** Whether a story needs approval by someone other than its author before publishing. */
		storyReviewRequired: boolean('story_review_required').notNull().default(true),
		/** A waypoint update each time a patient's public distance crosses a multiple of this. */
		waypointStepKm: integer('waypoint_step_km').notNull().default(500),
		/** A transmitter with no fix for this many days is marked silent ("last signal"). */
		silenceDays: integer('silence_days').notNull().default(30),
		/** Fixes on land farther than this from the coast are removed when cleaning. */
		inlandMetres: integer('inland_metres').notNull().default(5000),
		updatedAt: timestamp('updated_at', { withTimezone: true, mode: 'date' }).notNull().defaultNow(),
		updatedBy: text('updated_by').references(() => users.id, { onDelete: 'set null' })
	},
	(t) => [check('organisation_settings_single_row', sql`${t.id} = 1`)]
);

export const auditLog = pgTable(
	'audit_log',
	{
		id: serial('id').primaryKey(),
		actorId: text('actor_id').references(() => users.id, { onDelete: 'set null' }),
		action: text('action').notNull(),
		subject: text('subject'),
		details: jsonb('details').$type<Record<string, unknown>>().notNull().default({}),
		at: timestamp('at', { withTimezone: true, mode: 'date' }).notNull().defaultNow()
	},
	(t) => [index('audit_log_at_idx').on(t.at)]
);

export const SPECIES = [
	'loggerhead',
	'green',
	'kemps_ridley',
	'hawksbill',
	'leatherback',
	'olive_ridley',
	'flatback'
] as const;
export type Species = (typeof SPECIES)[number];

export const LIFE_STAGES = ['post_hatchling', 'juvenile', 'subadult', 'adult'] as const;
export type LifeStage = (typeof LIFE_STAGES)[number];

export const ADMISSION_REASONS = [
	'boat_strike',
	'entanglement',
	'fishing_hook_or_line',
	'cold_stunning',
	'fibropapillomatosis',
	'debris_ingestion',
	'other'
] as const;
export type AdmissionReason = (typeof ADMISSION_REASONS)[number];

export const PATIENT_STATUSES = [
	'admitted',
	'in_rehabilitation',
	'ready_for_release',
	'released',
	'permanent_resident',
	'died'
] as const;
export type PatientStatus = (typeof PATIENT_STATUSES)[number];

export const PUBLIC_TREATMENTS = ['shown', 'memorial', 'hidden'] as const;

/**
 * Patients. Columns under "staff only" must never reach a public surface: public code reads
 * through `publicPatientColumns` (src/lib/server/patients.ts), never `select()` of the whole row.
 */
export const patients = pgTable(
	'patients',
	{
		id: text('id').primaryKey(),
		slug: text('slug').notNull().unique(),
		name: text('name').notNull(),
		species: text('species', { enum: SPECIES }).notNull(),
		lifeStage: text('life_stage', { enum: LIFE_STAGES }).notNull(),
		carapaceLengthCm: numeric('carapace_length_cm', { precision: 6, scale: 1 }),
		weightKg: numeric('weight_kg', { precision: 7, scale: 2 }),
		admittedOn: date('admitted_on', { mode: 'string' }).notNull(),
		admissionReason: text('admission_reason', { enum: ADMISSION_REASONS }).notNull(),
		status: text('status', { enum: PATIENT_STATUSES }).notNull().default('admitted'),
		publicTreatment: text('public_treatment', { enum: PUBLIC_TREATMENTS })
			.notNull()
			.default('shown'),
		memorialNote: text('memorial_note'),
		summary: text('summary').notNull().default(''),
		heroImage: text('hero_image'),
		heroAlt: text('hero_alt'),
		// staff only
		strandingLatitude: numeric('stranding_latitude', { precision: 9, scale: 6 }),
		strandingLongitude: numeric('stranding_longitude', { precision: 9, scale: 6 }),
		strandingPlace: text('stranding_place'),
		strandedOn: date('stranded_on', { mode: 'string' }),
		flipperTags: text('flipper_tags')
			.array()
			.notNull()
			.default(sql`'{}'::text[]`),
		microchip: text('microchip'),
		transmitterId: text('transmitter_id'),
		medicalNotes: text('medical_notes'),
		agencyCaseNumber: text('agency_case_number'),
		...timestamps
	},
	(t) => [index('patients_status_idx').on(t.status)]
);

export const OUTBOX_STATUSES = ['pending', 'sent', 'failed'] as const;
export type OutboxStatus = (typeof OUTBOX_STATUSES)[number];

/**
 * Mail waiting to be sent. Rows are written in the same transaction as the change that causes
 * them; `dedupe_key` makes "at most once per (event, recipient)" a database constraint.
 */
export const outbox = pgTable(
	'outbox',
	{
		id: serial('id').primaryKey(),
		dedupeKey: text('dedupe_key').notNull().unique(),
		category: text('category').notNull(),
		toAddress: text('to_address').notNull(),
		subject: text('subject').notNull(),
		html: text('html').notNull(),
		text: text('text').notNull(),
		headers: jsonb('headers').$type<Record<string, string>>().notNull().default({}),
		status: text('status', { enum: OUTBOX_STATUSES }).notNull().default('pending'),
		attempts: integer('attempts').notNull().default(0),
		nextAttemptAt: timestamp('next_attempt_at', { withTimezone: true, mode: 'date' })
			.notNull()
			.defaultNow(),
		lockedUntil: timestamp('locked_until', { withTimezone: true, mode: 'date' }),
		lastError: text('last_error'),
		messageId: text('message_id').notNull(),
		/** The patient event a supporter update was sent for (counts per event on the staff page). */
		patientEventId: integer('patient_event_id'),
		createdAt: timestamp('created_at', { withTimezone: true, mode: 'date' }).notNull().defaultNow(),
		sentAt: timestamp('sent_at', { withTimezone: true, mode: 'date' })
	},
	(t) => [
		index('outbox_due_idx').on(t.status, t.nextAttemptAt),
		index('outbox_patient_event_idx').on(t.patientEventId)
	]
);

/** Mail caught by the local SMTP server (demo, development, tests). */
export const caughtMail = pgTable(
	'caught_mail',
	{
		id: serial('id').primaryKey(),
		messageId: text('message_id'),
		envelopeFrom: text('envelope_from').notNull(),
		envelopeTo: text('envelope_to').array().notNull(),
		subject: text('subject').notNull().default(''),
		html: text('html'),
		text: text('text'),
		headers: jsonb('headers').$type<Record<string, string>>().notNull().default({}),
		raw: text('raw').notNull(),
		receivedAt: timestamp('received_at', { withTimezone: true, mode: 'date' })
			.notNull()
			.defaultNow()
	},
	(t) => [uniqueIndex('caught_mail_message_id_unique').on(t.messageId)]
);

/** PostgreSQL bytea as a Node Buffer (drizzle has no built-in bytea column yet). */
const bytea = customType<{ data: Buffer; driverData: Buffer | Uint8Array }>({
	dataType: () => 'bytea',
	fromDriver: (value) => (Buffer.isBuffer(value) ? value : Buffer.from(value))
});

export const patientStatusLog = pgTable(
	'patient_status_log',
	{
		id: serial('id').primaryKey(),
		patientId: text('patient_id')
			.notNull()
			.references(() => patients.id, { onDelete: 'cascade' }),
		fromStatus: text('from_status', { enum: PATIENT_STATUSES }),
		toStatus: text('to_status', { enum: PATIENT_STATUSES }).notNull(),
		note: text('note'),
		changedBy: text('changed_by').references(() => users.id, { onDelete: 'set null' }),
		changedAt: timestamp('changed_at', { withTimezone: true, mode: 'date' }).notNull().defaultNow()
	},
	(t) => [index('patient_status_log_patient_idx').on(t.patientId, t.changedAt)]
);

export const RELEASE_HABITATS = ['beach', 'seagrass_bed', 'offshore_weed_line', 'other'] as const;
export type ReleaseHabitat = (typeof RELEASE_HABITATS)[number];

/** A planned or completed release. The exact site is staff only; the public sees `publicArea`. */
export const releases = pgTable(
	'releases',
	{
		id: text('id').primaryKey(),
		patientId: text('patient_id')
			.notNull()
			.references(() => patients.id, { onDelete: 'cascade' }),
		releaseOn: date('release_on', { mode: 'string' }).notNull(),
		publicArea: text('public_area').notNull(),
		habitat: text('habitat', { enum: RELEASE_HABITATS }).notNull(),
		// staff only
		siteLatitude: numeric('site_latitude', { precision: 9, scale: 6 }),
		siteLongitude: numeric('site_longitude', { precision: 9, scale: 6 }),
		siteNotes: text('site_notes'),
		authorisationRef: text('authorisation_ref'),
		vetClearedBy: text('vet_cleared_by'),
		vetClearedOn: date('vet_cleared_on', { mode: 'string' }),
		transmitterAttached: boolean('transmitter_attached').notNull().default(false),
		doneAt: timestamp('done_at', { withTimezone: true, mode: 'date' }),
		doneBy: text('done_by').references(() => users.id, { onDelete: 'set null' }),
		...timestamps
	},
	(t) => [index('releases_patient_idx').on(t.patientId)]
);

export const PATIENT_EVENT_KINDS = [
	'released',
	'story_published',
	'waypoint',
	'last_signal'
] as const;
export type PatientEventKind = (typeof PATIENT_EVENT_KINDS)[number];

/**
 * Things that happened to a patient that supporters may hear about. The supporter-updates work
 * turns them into e-mails; `dedupe_key` stores each event once.
 */
export const patientEvents = pgTable(
	'patient_events',
	{
		id: serial('id').primaryKey(),
		patientId: text('patient_id')
			.notNull()
			.references(() => patients.id, { onDelete: 'cascade' }),
		kind: text('kind', { enum: PATIENT_EVENT_KINDS }).notNull(),
		dedupeKey: text('dedupe_key').notNull().unique(),
		payload: jsonb('payload').$type<Record<string, unknown>>().notNull().default({}),
		occurredAt: timestamp('occurred_at', { withTimezone: true, mode: 'date' })
			.notNull()
			.defaultNow(),
		processedAt: timestamp('processed_at', { withTimezone: true, mode: 'date' }),
		/** A last-signal update waits for this note, written by staff: never automatic wording. */
		message: text('message'),
		approvedBy: text('approved_by').references(() => users.id, { onDelete: 'set null' }),
		approvedAt: timestamp('approved_at', { withTimezone: true, mode: 'date' }),
		/** What the fan-out did: 'sent', 'superseded' (a later waypoint names the step), 'withheld'. */
		outcome: text('outcome'),
		recipientCount: integer('recipient_count'),
		/** An instance fanning the event out holds it until then (renewed as it goes). */
		claimedUntil: timestamp('claimed_until', { withTimezone: true, mode: 'date' })
	},
	(t) => [index('patient_events_unprocessed_idx').on(t.processedAt, t.id)]
);

/** An uploaded image, cleaned and resized; the bytes live in `media_variants`. */
export const media = pgTable('media', {
	id: text('id').primaryKey(),
	alt: text('alt').notNull().default(''),
	width: integer('width').notNull(),
	height: integer('height').notNull(),
	originalName: text('original_name'),
	uploadedBy: text('uploaded_by').references(() => users.id, { onDelete: 'set null' }),
	createdAt: timestamp('created_at', { withTimezone: true, mode: 'date' }).notNull().defaultNow()
});

/** The web sizes of an image, stored in the database so that every instance can serve them. */
export const mediaVariants = pgTable(
	'media_variants',
	{
		mediaId: text('media_id')
			.notNull()
			.references(() => media.id, { onDelete: 'cascade' }),
		width: integer('width').notNull(),
		format: text('format', { enum: ['webp', 'jpeg'] }).notNull(),
		height: integer('height').notNull(),
		bytes: bytea('bytes').notNull(),
		etag: text('etag').notNull()
	},
	(t) => [primaryKey({ columns: [t.mediaId, t.width, t.format] })]
);

export const patientPhotos = pgTable(
	'patient_photos',
	{
		patientId: text('patient_id')
			.notNull()
			.references(() => patients.id, { onDelete: 'cascade' }),
		mediaId: text('media_id')
			.notNull()
			.references(() => media.id, { onDelete: 'cascade' }),
		position: integer('position').notNull().default(0),
		caption: text('caption')
	},
	(t) => [primaryKey({ columns: [t.patientId, t.mediaId] })]
);

export const STORY_KINDS = ['admission', 'progress', 'release', 'journey', 'general'] as const;
export type StoryKind = (typeof STORY_KINDS)[number];
export const STORY_STATUSES = ['draft', 'in_review', 'scheduled', 'published', 'archived'] as const;
export type StoryStatus = (typeof STORY_STATUSES)[number];

export const stories = pgTable(
	'stories',
	{
		id: text('id').primaryKey(),
		slug: text('slug').notNull().unique(),
		title: text('title').notNull(),
		kind: text('kind', { enum: STORY_KINDS }).notNull(),
		summary: text('summary').notNull().default(''),
		bodyMarkdown: text('body_markdown').notNull().default(''),
		/** Rendered with marked and cleaned with sanitize-html on the server at every save. */
		bodyHtml: text('body_html').notNull().default(''),
		heroMediaId: text('hero_media_id').references(() => media.id, { onDelete: 'set null' }),
		status: text('status', { enum: STORY_STATUSES }).notNull().default('draft'),
		authorId: text('author_id').references(() => users.id, { onDelete: 'set null' }),
		approvedBy: text('approved_by').references(() => users.id, { onDelete: 'set null' }),
		approvedAt: timestamp('approved_at', { withTimezone: true, mode: 'date' }),
		publishAt: timestamp('publish_at', { withTimezone: true, mode: 'date' }),
		publishedAt: timestamp('published_at', { withTimezone: true, mode: 'date' }),
		...timestamps
	},
	(t) => [
		index('stories_status_idx').on(t.status, t.publishedAt),
		index('stories_due_idx').on(t.status, t.publishAt)
	]
);

export const storyPatients = pgTable(
	'story_patients',
	{
		storyId: text('story_id')
			.notNull()
			.references(() => stories.id, { onDelete: 'cascade' }),
		patientId: text('patient_id')
			.notNull()
			.references(() => patients.id, { onDelete: 'cascade' })
	},
	(t) => [
		primaryKey({ columns: [t.storyId, t.patientId] }),
		index('story_patients_patient_idx').on(t.patientId)
	]
);

// ---------------------------------------------------------------------------------------------
// Tracking. Everything here except `journeys` is staff only: exact positions and times of
// animals at sea. The public reads nothing but `journeys`, which holds the public projection.

export const LOCATION_CLASS_VALUES = ['G', '3', '2', '1', '0', 'A', 'B', 'Z'] as const;
export const POSITION_STATUSES = ['pending', 'kept', 'rejected'] as const;
export const CELL_SIZE_VALUES = ['0.1', '0.25', '0.5', '1'] as const;
export const IMPORT_FORMATS = ['csv', 'geojson', 'gpx'] as const;

/** How a patient's track is cleaned and published; one row per tracked patient. */
export const trackingProfiles = pgTable(
	'tracking_profiles',
	{
		patientId: text('patient_id')
			.primaryKey()
			.references(() => patients.id, { onDelete: 'cascade' }),
		/** Days before a fix may be public; never below 7, staff may raise it. */
		delayDays: integer('delay_days').notNull().default(7),
		cellDeg: text('cell_deg', { enum: CELL_SIZE_VALUES }).notNull().default('0.1'),
		minimumClass: text('minimum_class', { enum: LOCATION_CLASS_VALUES }).notNull().default('B'),
		/** Null: the species default. */
		maxSpeedMs: real('max_speed_ms'),
		// the last computation, for the Tracking desk
		computedAt: timestamp('computed_at', { withTimezone: true, mode: 'date' }),
		rawCount: integer('raw_count').notNull().default(0),
		keptCount: integer('kept_count').notNull().default(0),
		rejectedCount: integer('rejected_count').notNull().default(0),
		lastFixAt: timestamp('last_fix_at', { withTimezone: true, mode: 'date' }),
		silentSince: timestamp('silent_since', { withTimezone: true, mode: 'date' }),
		/** Exact cleaned length up to the public cutoff, for waypoint steps; readers see it rounded. */
		publicDistanceMetres: doublePrecision('public_distance_metres').notNull().default(0),
		...timestamps
	},
	(t) => [check('tracking_profiles_delay_min', sql`${t.delayDays} >= 7`)]
);

/** One uploaded file of positions, with what happened to its rows. */
export const positionImports = pgTable(
	'position_imports',
	{
		id: text('id').primaryKey(),
		patientId: text('patient_id')
			.notNull()
			.references(() => patients.id, { onDelete: 'cascade' }),
		transmitterId: text('transmitter_id').notNull(),
		fileName: text('file_name').notNull(),
		format: text('format', { enum: IMPORT_FORMATS }).notNull(),
		rowsRead: integer('rows_read').notNull(),
		rowsAdded: integer('rows_added').notNull(),
		rowsAlreadyStored: integer('rows_already_stored').notNull(),
		rowsRefused: integer('rows_refused').notNull(),
		/** The first problems found (row, column, message); the count is in rowsRefused. */
		problems: jsonb('problems')
			.$type<Array<{ row: number; column: string; message: string }>>()
			.notNull()
			.default([]),
		uploadedBy: text('uploaded_by').references(() => users.id, { onDelete: 'set null' }),
		createdAt: timestamp('created_at', { withTimezone: true, mode: 'date' }).notNull().defaultNow()
	},
	(t) => [index('position_imports_patient_idx').on(t.patientId, t.createdAt)]
);

/**
 * Raw satellite positions, exactly as received, with the cleaning verdict. The same fix sent
 * twice (transmitter, time, place and class) is stored once; two different fixes at the same
 * time are both kept here and the cleaning keeps the better one.
 */
export const positions = pgTable(
	'positions',
	{
		id: bigserial('id', { mode: 'number' }).primaryKey(),
		patientId: text('patient_id')
			.notNull()
			.references(() => patients.id, { onDelete: 'cascade' }),
		transmitterId: text('transmitter_id').notNull(),
		observedAt: timestamp('observed_at', { withTimezone: true, mode: 'date' }).notNull(),
		latitude: doublePrecision('latitude').notNull(),
		longitude: doublePrecision('longitude').notNull(),
		locationClass: text('location_class', { enum: LOCATION_CLASS_VALUES }).notNull(),
		semiMajorM: real('semi_major_m'),
		semiMinorM: real('semi_minor_m'),
		orientationDeg: real('orientation_deg'),
		errorRadiusM: real('error_radius_m'),
		importId: text('import_id').references(() => positionImports.id, { onDelete: 'set null' }),
		status: text('status', { enum: POSITION_STATUSES }).notNull().default('pending'),
		rejectReason: text('reject_reason'),
		rejectDetail: text('reject_detail')
	},
	(t) => [
		uniqueIndex('positions_same_fix_unique').on(
			t.transmitterId,
			t.observedAt,
			t.latitude,
			t.longitude,
			t.locationClass
		),
		index('positions_patient_time_idx').on(t.patientId, t.observedAt)
	]
);

/**
 * The public projection of a patient's journey: delayed, snapped to the grid, dates only. The
 * journey API, the patient page, share images, e-mails and exports read only this table.
 */
export const journeys = pgTable('journeys', {
	patientId: text('patient_id')
		.primaryKey()
		.references(() => patients.id, { onDelete: 'cascade' }),
	geojson: jsonb('geojson').$type<Record<string, unknown>>().notNull(),
	etag: text('etag').notNull(),
	cutoffDate: date('cutoff_date', { mode: 'string' }).notNull(),
	computedAt: timestamp('computed_at', { withTimezone: true, mode: 'date' }).notNull().defaultNow()
});

// ---------------------------------------------------------------------------------------------
// Adoptions and money. Amounts are integer minor units (cents) with a currency, never floats.

export const LEVEL_INTERVALS = ['once', 'month'] as const;
export type LevelInterval = (typeof LEVEL_INTERVALS)[number];
export const LEVEL_KINDS = ['individual', 'classroom'] as const;

/** What a supporter can choose when adopting; edited by development staff. */
export const adoptionLevels = pgTable('adoption_levels', {
	id: text('id').primaryKey(),
	slug: text('slug').notNull().unique(),
	name: text('name').notNull(),
	description: text('description').notNull().default(''),
	amountCents: integer('amount_cents').notNull(),
	currency: text('currency').notNull().default('usd'),
	interval: text('interval', { enum: LEVEL_INTERVALS }).notNull(),
	kind: text('kind', { enum: LEVEL_KINDS }).notNull().default('individual'),
	/** What the supporter receives (e.g. a keepsake kit); empty when nothing. */
	goods: text('goods').notNull().default(''),
	/** Fair market value of the goods, set by staff; 0 when nothing is received. */
	fairMarketValueCents: integer('fair_market_value_cents').notNull().default(0),
	/** The goods are low-cost articles bearing the organisation's name or logo (receipt rules). */
	goodsTokenItem: boolean('goods_token_item').notNull().default(false),
	active: boolean('active').notNull().default(true),
	position: integer('position').notNull().default(0),
	...timestamps
});

export const ADOPTION_KINDS = ['self', 'gift', 'classroom'] as const;
export type AdoptionKind = (typeof ADOPTION_KINDS)[number];
export const ADOPTION_STATUSES = ['pending', 'active', 'ended', 'cancelled', 'failed'] as const;
export type AdoptionStatus = (typeof ADOPTION_STATUSES)[number];

/**
 * One adoption: who adopted which patient at which level, as themselves, as a gift or for a
 * classroom. Created when checkout starts (pending) and made active by the processor's events.
 */
export const adoptions = pgTable(
	'adoptions',
	{
		id: text('id').primaryKey(),
		patientId: text('patient_id')
			.notNull()
			.references(() => patients.id, { onDelete: 'restrict' }),
		levelId: text('level_id')
			.notNull()
			.references(() => adoptionLevels.id, { onDelete: 'restrict' }),
		kind: text('kind', { enum: ADOPTION_KINDS }).notNull(),
		status: text('status', { enum: ADOPTION_STATUSES }).notNull().default('pending'),
		interval: text('interval', { enum: LEVEL_INTERVALS }).notNull(),
		amountCents: integer('amount_cents').notNull(),
		currency: text('currency').notNull(),
		fairMarketValueCents: integer('fair_market_value_cents').notNull().default(0),
		/** The account that paid, when signed in (or once claimed by e-mail). */
		supporterId: text('supporter_id').references(() => users.id, { onDelete: 'set null' }),
		supporterEmail: text('supporter_email').notNull(),
		supporterName: text('supporter_name').notNull(),
		recipientName: text('recipient_name'),
		recipientEmail: text('recipient_email'),
		giftMessage: text('gift_message'),
		deliverOn: date('deliver_on', { mode: 'string' }),
		recipientId: text('recipient_id').references(() => users.id, { onDelete: 'set null' }),
		teacherName: text('teacher_name'),
		schoolName: text('school_name'),
		classSize: integer('class_size'),
		checkoutSessionId: text('checkout_session_id').unique(),
		customerId: text('customer_id'),
		subscriptionId: text('subscription_id').unique(),
		startedAt: timestamp('started_at', { withTimezone: true, mode: 'date' }),
		endedAt: timestamp('ended_at', { withTimezone: true, mode: 'date' }),
		/** A monthly adoption the supporter cancelled runs to the end of the paid month: this date. */
		cancelAt: timestamp('cancel_at', { withTimezone: true, mode: 'date' }),
		/** The processor's `created` time of the last subscription update applied (ordering). */
		subscriptionSyncedAt: timestamp('subscription_synced_at', { withTimezone: true, mode: 'date' }),
		/** When the gift notice went to the recipient (on the delivery date, or at once). */
		giftNotifiedAt: timestamp('gift_notified_at', { withTimezone: true, mode: 'date' }),
		/** Hash of the link the recipient follows to add the gift to an account. */
		claimTokenHash: text('claim_token_hash').unique(),
		...timestamps
	},
	(t) => [
		index('adoptions_patient_idx').on(t.patientId, t.status),
		index('adoptions_supporter_idx').on(t.supporterId),
		index('adoptions_supporter_email_idx').on(t.supporterEmail)
	]
);

export const GIFT_STATUSES = [
	'paid',
	'failed',
	'refunded',
	'partially_refunded',
	'disputed'
] as const;
export type GiftStatus = (typeof GIFT_STATUSES)[number];
export const GIFT_SOURCES = ['processor', 'manual'] as const;
export const MANUAL_GIFT_METHODS = ['cheque', 'cash', 'bank_transfer', 'other'] as const;
export type ManualGiftMethod = (typeof MANUAL_GIFT_METHODS)[number];

/**
 * One payment for an adoption (the first, or a monthly renewal), tied to every processor object
 * the Ledger reconciles against.
 */
export const gifts = pgTable(
	'gifts',
	{
		id: text('id').primaryKey(),
		/** The adoption paid for; null for a gift recorded by hand (cheque, cash). */
		adoptionId: text('adoption_id').references(() => adoptions.id, { onDelete: 'restrict' }),
		/** 'processor' (paid online) or 'manual' (recorded by development staff). */
		source: text('source', { enum: GIFT_SOURCES }).notNull().default('processor'),
		/** How a manual gift was paid, its reference (cheque number…), and who gave it. */
		method: text('method', { enum: MANUAL_GIFT_METHODS }),
		reference: text('reference'),
		donorName: text('donor_name'),
		donorEmail: text('donor_email'),
		recordedBy: text('recorded_by').references(() => users.id, { onDelete: 'set null' }),
		status: text('status', { enum: GIFT_STATUSES }).notNull(),
		amountCents: integer('amount_cents').notNull(),
		currency: text('currency').notNull(),
		feeCents: integer('fee_cents'),
		netCents: integer('net_cents'),
		refundedCents: integer('refunded_cents').notNull().default(0),
		fairMarketValueCents: integer('fair_market_value_cents').notNull().default(0),
		checkoutSessionId: text('checkout_session_id'),
		paymentIntentId: text('payment_intent_id'),
		chargeId: text('charge_id').unique(),
		invoiceId: text('invoice_id').unique(),
		subscriptionId: text('subscription_id'),
		customerId: text('customer_id'),
		balanceTransactionId: text('balance_transaction_id'),
		payoutId: text('payout_id'),
		disputeId: text('dispute_id'),
		disputeStatus: text('dispute_status'),
		failureMessage: text('failure_message'),
		paidAt: timestamp('paid_at', { withTimezone: true, mode: 'date' }),
		...timestamps
	},
	(t) => [
		index('gifts_adoption_idx').on(t.adoptionId),
		index('gifts_paid_at_idx').on(t.paidAt),
		index('gifts_donor_email_idx').on(t.donorEmail),
		check(
			'gifts_source_shape',
			sql`(${t.source} = 'processor' AND ${t.adoptionId} IS NOT NULL) OR (${t.source} = 'manual' AND ${t.donorEmail} IS NOT NULL AND ${t.donorName} IS NOT NULL)`
		),
		uniqueIndex('gifts_payment_intent_unique').on(t.paymentIntentId)
	]
);

/** Processor events already applied: the id is stored in the same transaction as the effects. */
export const processorEvents = pgTable('processor_events', {
	id: text('id').primaryKey(),
	type: text('type').notNull(),
	/** The processor's `created` time of the event. */
	createdAt: timestamp('created_at', { withTimezone: true, mode: 'date' }).notNull(),
	processedAt: timestamp('processed_at', { withTimezone: true, mode: 'date' })
		.notNull()
		.defaultNow()
});

/** Payouts from the processor to the bank, for the Ledger. */
export const payouts = pgTable('payouts', {
	id: text('id').primaryKey(),
	status: text('status').notNull(),
	amountCents: integer('amount_cents').notNull(),
	currency: text('currency').notNull(),
	arrivalDate: timestamp('arrival_date', { withTimezone: true, mode: 'date' }),
	failureMessage: text('failure_message'),
	/** Development staff confirm a payout matches the gifts; who and when. */
	reconciledBy: text('reconciled_by').references(() => users.id, { onDelete: 'set null' }),
	reconciledAt: timestamp('reconciled_at', { withTimezone: true, mode: 'date' }),
	reconcileNote: text('reconcile_note'),
	...timestamps
});

/**
 * The balance transactions a payout paid out (charges, refunds, dispute withdrawals and
 * reversals, with their fees), as the processor reports them, each matched to a gift when one
 * is found by its charge.
 */
export const payoutLines = pgTable(
	'payout_lines',
	{
		/** The processor's balance transaction id. */
		id: text('id').primaryKey(),
		payoutId: text('payout_id').notNull(),
		type: text('type').notNull(),
		reportingCategory: text('reporting_category').notNull(),
		amountCents: integer('amount_cents').notNull(),
		feeCents: integer('fee_cents').notNull(),
		netCents: integer('net_cents').notNull(),
		currency: text('currency').notNull(),
		/** The charge, refund, dispute or payout the transaction belongs to. */
		sourceId: text('source_id'),
		/** The charge behind it (for a refund or a dispute, the charge it reverses). */
		chargeId: text('charge_id'),
		giftId: text('gift_id').references(() => gifts.id, { onDelete: 'set null' }),
		createdAt: timestamp('created_at', { withTimezone: true, mode: 'date' }).notNull()
	},
	(t) => [
		index('payout_lines_payout_idx').on(t.payoutId),
		index('payout_lines_charge_idx').on(t.chargeId)
	]
);

/** A person's note on a reconciliation difference (keyed by what the difference is about). */
export const reconciliationNotes = pgTable(
	'reconciliation_notes',
	{
		payoutId: text('payout_id').notNull(),
		issueKey: text('issue_key').notNull(),
		note: text('note').notNull(),
		authorId: text('author_id').references(() => users.id, { onDelete: 'set null' }),
		createdAt: timestamp('created_at', { withTimezone: true, mode: 'date' }).notNull().defaultNow()
	},
	(t) => [primaryKey({ columns: [t.payoutId, t.issueKey] })]
);

/** Named gapless counters (receipt numbers): incremented inside the transaction that uses them. */
export const counters = pgTable('counters', {
	name: text('name').primaryKey(),
	value: integer('value').notNull()
});

export const RECEIPT_STATUSES = ['issued', 'void'] as const;
export type ReceiptStatus = (typeof RECEIPT_STATUSES)[number];
export const RECEIPT_KINDS = ['original', 'corrected'] as const;

/**
 * A tax receipt for one gift. Numbers are sequential and never reused; a refund voids the receipt
 * and, when money is left, issues a corrected one that names the receipt it replaces.
 */
export const receipts = pgTable(
	'receipts',
	{
		id: text('id').primaryKey(),
		number: integer('number').notNull().unique(),
		giftId: text('gift_id').references(() => gifts.id, { onDelete: 'restrict' }),
		status: text('status', { enum: RECEIPT_STATUSES }).notNull().default('issued'),
		kind: text('kind', { enum: RECEIPT_KINDS }).notNull().default('original'),
		replacesId: text('replaces_id'),
		country: text('country').notNull().default('US'),
		donorName: text('donor_name').notNull(),
		donorEmail: text('donor_email').notNull(),
		description: text('description').notNull(),
		goodsDescription: text('goods_description').notNull().default(''),
		/** The goods were low-cost articles bearing the organisation's name or logo. */
		goodsTokenItem: boolean('goods_token_item').notNull().default(false),
		amountCents: integer('amount_cents').notNull(),
		currency: text('currency').notNull(),
		fairMarketValueCents: integer('fair_market_value_cents').notNull().default(0),
		deductibleCents: integer('deductible_cents').notNull(),
		giftDate: date('gift_date', { mode: 'string' }).notNull(),
		issuedAt: timestamp('issued_at', { withTimezone: true, mode: 'date' }).notNull().defaultNow(),
		voidedAt: timestamp('voided_at', { withTimezone: true, mode: 'date' })
	},
	(t) => [
		index('receipts_gift_idx').on(t.giftId),
		index('receipts_donor_email_idx').on(t.donorEmail)
	]
);

/**
 * What updates an e-mail address wants (keyed by address, so recipients without an account have
 * them too). Transactional mail (receipts, sign-in) is always sent.
 */
export const mailPreferences = pgTable('mail_preferences', {
	email: text('email').primaryKey(),
	homecoming: boolean('homecoming').notNull().default(true),
	waypoint: boolean('waypoint').notNull().default(true),
	fieldNote: boolean('field_note').notNull().default(true),
	lastSignal: boolean('last_signal').notNull().default(true),
	/** Keep receiving a patient's updates after the adoption ends. */
	keepFollowing: boolean('keep_following').notNull().default(false),
	updatedAt: timestamp('updated_at', { withTimezone: true, mode: 'date' }).notNull().defaultNow()
});

/** Secrets the instances share (signing unsubscribe links), made once on first use. */
export const appSecrets = pgTable('app_secrets', {
	name: text('name').primaryKey(),
	value: text('value').notNull(),
	createdAt: timestamp('created_at', { withTimezone: true, mode: 'date' }).notNull().defaultNow()
});
