import { sql } from 'drizzle-orm';
import {
	boolean,
	check,
	date,
	index,
	integer,
	jsonb,
	numeric,
	pgTable,
	primaryKey,
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
		createdAt: timestamp('created_at', { withTimezone: true, mode: 'date' }).notNull().defaultNow(),
		sentAt: timestamp('sent_at', { withTimezone: true, mode: 'date' })
	},
	(t) => [index('outbox_due_idx').on(t.status, t.nextAttemptAt)]
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
