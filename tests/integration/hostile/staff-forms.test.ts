// Hostile input through every staff form: Newsroom (patients, releases, stories, farewells),
// Ledger (manual gifts, levels, payouts, statements, reminders), settings, people, mail, outbox
// and the Tracking desk. Saved text is read back, and what the public sees is rendered with the
// app's own pages (svelte/server) to check that it stays text.
import { eq } from 'drizzle-orm';
import { render } from 'svelte/server';
import { beforeAll, expect } from 'vitest';
import type { SessionUser } from '$lib/server/auth/lucia';
import {
	adoptionLevels,
	gifts,
	organisationSettings,
	patientEvents,
	patients,
	patientStatusLog,
	payouts,
	releases,
	stories,
	users
} from '$lib/server/db/schema';
import PatientPage from '../../../src/routes/patients/[slug]/+page.svelte';
import { load as patientPageLoad } from '../../../src/routes/patients/[slug]/+page.server';
import { actions as dashboardActions } from '../../../src/routes/staff/ledger/dashboard/+page.server';
import { actions as newGiftActions } from '../../../src/routes/staff/ledger/gifts/new/+page.server';
import { actions as levelActions } from '../../../src/routes/staff/ledger/levels/+page.server';
import { actions as payoutActions } from '../../../src/routes/staff/ledger/payouts/[id]/+page.server';
import { actions as statementActions } from '../../../src/routes/staff/ledger/statements/+page.server';
import { actions as templateActions } from '../../../src/routes/staff/mail/templates/+page.server';
import { actions as farewellActions } from '../../../src/routes/staff/newsroom/farewells/+page.server';
import { actions as patientActions } from '../../../src/routes/staff/newsroom/patients/[id]/+page.server';
import { actions as newPatientActions } from '../../../src/routes/staff/newsroom/patients/new/+page.server';
import { actions as storyActions } from '../../../src/routes/staff/newsroom/stories/[id]/+page.server';
import { actions as newStoryActions } from '../../../src/routes/staff/newsroom/stories/new/+page.server';
import { actions as outboxActions } from '../../../src/routes/staff/outbox/+page.server';
import { actions as settingsActions } from '../../../src/routes/staff/settings/+page.server';
import { actions as deskActions } from '../../../src/routes/staff/tracking/+page.server';
import { actions as trackingActions } from '../../../src/routes/staff/tracking/[slug]/+page.server';
import { actions as userActions } from '../../../src/routes/staff/users/+page.server';
import StoryPage from '../../../src/routes/stories/[slug]/+page.svelte';
import { load as storyPageLoad } from '../../../src/routes/stories/[slug]/+page.server';
import { useTestDatabase } from '../../setup/test-db';
import { daysAgo, people } from '../newsroom-helpers';
import { publicEvent } from '../public-event';
import { liveMarkup, SHAPES, type Outcome } from './harness';
import { EMAILS, FIELD_PAYLOADS, PARAMS, SOME_TEXT, TEXT_PAYLOADS } from './payloads';
import { hostileForms, type FieldCases, type FormSurface } from './surfaces';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();
const person = people(db);

let admin: SessionUser;
let educator: SessionUser;
let development: SessionUser;
let tracker: SessionUser;
const DIED = crypto.randomUUID();
const EDITED = crypto.randomUUID();
const TRACKED = 'hostile-tracked';
const STORY = crypto.randomUUID();
const LEVEL = crypto.randomUUID();

const text = [...TEXT_PAYLOADS, ...SHAPES];
const someText = [...SOME_TEXT, SHAPES[0]];
const fieldValues = [...FIELD_PAYLOADS, SHAPES[0], SHAPES[1]];

async function insertPatient(
	status: (typeof patients.$inferInsert)['status'],
	id = crypto.randomUUID()
) {
	await db()
		.insert(patients)
		.values({
			id,
			slug: `hostile-${id.slice(0, 8)}`,
			name: `Patient ${id.slice(0, 4)}`,
			species: 'green',
			lifeStage: 'juvenile',
			admittedOn: '2026-01-10',
			admissionReason: 'entanglement',
			status,
			transmitterId: null
		});
	return id;
}

beforeAll(async () => {
	[admin, educator, development, tracker] = await Promise.all([
		person(['admin']),
		person(['educator']),
		person(['development']),
		person(['tracker'])
	]);
	await db().insert(organisationSettings).values({
		displayName: 'Example Turtle Hospital',
		legalName: 'Example Turtle Hospital Inc.',
		postalAddress: '1 Example Road, Example Town 00000'
	});
	await insertPatient('died', DIED);
	await insertPatient('in_rehabilitation', EDITED);
	await db().insert(patients).values({
		id: crypto.randomUUID(),
		slug: TRACKED,
		name: 'Tracked',
		species: 'loggerhead',
		lifeStage: 'adult',
		admittedOn: '2026-01-01',
		admissionReason: 'boat_strike',
		status: 'released',
		transmitterId: 'TX-HOSTILE'
	});
	await db().insert(stories).values({
		id: STORY,
		slug: 'hostile-story',
		title: 'A story to edit',
		kind: 'progress'
	});
	await db().insert(adoptionLevels).values({
		id: LEVEL,
		slug: 'hostile-level',
		name: 'Ripple',
		amountCents: 2500,
		interval: 'once'
	});
});

// ── how saved values are read back ────────────────────────────────────────────────────────────

const idFromLocation = (outcome: Outcome) =>
	outcome.kind === 'redirect' ? (outcome.location.split('?')[0].split('/').at(-1) ?? '') : '';

async function patientRow(id: string) {
	const [row] = await db().select().from(patients).where(eq(patients.id, id));
	return row;
}

async function storyRow(id: string) {
	const [row] = await db().select().from(stories).where(eq(stories.id, id));
	return row;
}

/** The public patient page, rendered on the server as a visitor gets it. */
async function renderPatientPage(slug: string): Promise<string> {
	const data = await patientPageLoad(publicEvent(`/patients/${slug}`, { slug }));
	const { head, body } = render(PatientPage, { props: { data: data as never } });
	return head + body;
}

/** Publishes the story (as the scheduler would) and renders its public page. */
async function renderStoryPage(id: string): Promise<string> {
	await db()
		.update(stories)
		.set({ status: 'published', publishedAt: new Date() })
		.where(eq(stories.id, id));
	const { slug } = await storyRow(id);
	const data = await storyPageLoad(publicEvent(`/stories/${slug}`, { slug }));
	const { head, body } = render(StoryPage, { props: { data: data as never } });
	return head + body;
}

/**
 * The hostile text as the page shows it: never as markup. Svelte escapes & < in text and
 * & " in attributes, so the raw value (when it has markup) must not appear anywhere.
 */
function expectEscaped(html: string, value: string) {
	if (/[<>]/.test(value)) {
		expect(html.includes(value), 'the raw value is not in the page').toBe(false);
	}
	expect(liveMarkup(html), 'no live markup').toBeNull();
}

const patientText = (column: keyof typeof patients.$inferSelect): Pick<FieldCases, 'stored'> => ({
	stored: async (outcome) => (await patientRow(idFromLocation(outcome)))[column]
});

/** Only a value with markup characters or a URL scheme can turn into markup; render those. */
const couldBeMarkup = (value: string) => /[<>&"']|script:/i.test(value);

const renderedPatient: FieldCases['check'] = async (outcome, _context, received) => {
	if (!couldBeMarkup(received)) return;
	const row = await patientRow(idFromLocation(outcome));
	expectEscaped(await renderPatientPage(row.slug), received);
};

const storyText = (column: 'title' | 'summary' | 'bodyMarkdown'): Pick<FieldCases, 'stored'> => ({
	stored: async (outcome) => (await storyRow(idFromLocation(outcome)))[column]
});

const renderedStory: FieldCases['check'] = async (outcome, _context, received) => {
	const id = idFromLocation(outcome);
	const row = await storyRow(id);
	// The body is stored as typed and served only through sanitize-html.
	expect(liveMarkup(row.bodyHtml), 'sanitised body').toBeNull();
	if (couldBeMarkup(received)) expectEscaped(await renderStoryPage(id), received);
};

// ── the surfaces ──────────────────────────────────────────────────────────────────────────────

const validPatient = () => ({
	name: `Hostile ${crypto.randomUUID().slice(0, 6)}`,
	species: 'green',
	lifeStage: 'juvenile',
	admittedOn: daysAgo(30),
	admissionReason: 'entanglement',
	summary: 'Recovering well.'
});

const validStory = () => ({
	title: `Story ${crypto.randomUUID().slice(0, 6)}`,
	kind: 'progress',
	summary: 'A short summary.',
	bodyMarkdown: 'Some **news**.'
});

const validLevel = () => ({
	name: `Level ${crypto.randomUUID().slice(0, 6)}`,
	description: 'Follow a patient.',
	amount: '25',
	interval: 'once',
	kind: 'individual',
	goods: '',
	fairMarketValue: ''
});

hostileForms(
	'staff-forms',
	db,
	() => {
		const surfaces: FormSurface[] = [
			{
				name: 'Newsroom: new patient',
				action: newPatientActions.create,
				path: '/staff/newsroom/patients/new?/create',
				user: () => educator,
				valid: validPatient,
				fields: [
					{ field: 'name', payloads: text, ...patientText('name'), check: renderedPatient },
					{
						field: 'summary',
						payloads: someText,
						...patientText('summary'),
						check: renderedPatient
					},
					{ field: 'medicalNotes', payloads: someText, ...patientText('medicalNotes') },
					{ field: 'strandingPlace', payloads: someText, ...patientText('strandingPlace') },
					{ field: 'flipperTags', payloads: someText },
					{ field: 'carapaceLengthCm', payloads: fieldValues },
					{ field: 'admittedOn', payloads: fieldValues },
					{ field: 'strandingLatitude', payloads: fieldValues },
					{ field: 'species', payloads: fieldValues }
				]
			},
			{
				name: 'Newsroom: patient profile',
				action: patientActions.profile,
				path: `/staff/newsroom/patients/${EDITED}?/profile`,
				params: () => ({ id: EDITED }),
				user: () => educator,
				valid: validPatient,
				fields: [
					{
						field: 'name',
						payloads: someText,
						stored: async () => (await patientRow(EDITED)).name
					},
					{ field: 'weightKg', payloads: fieldValues }
				]
			},
			{
				name: 'Newsroom: patient profile of an unknown id',
				action: patientActions.profile,
				path: '/staff/newsroom/patients/{param}?/profile',
				user: () => educator,
				params: () => ({ id: 'no-such-patient' }),
				valid: validPatient,
				mustRefuse: true,
				fields: [
					{ field: 'name', payloads: someText.slice(0, 6) },
					{ field: 'id', in: 'params', payloads: PARAMS }
				]
			},
			{
				name: 'Newsroom: status change with a note',
				action: patientActions.status,
				path: '/staff/newsroom/patients/x?/status',
				user: () => educator,
				prepare: async () => ({ id: await insertPatient('admitted') }),
				params: (f) => ({ id: f.id }),
				valid: () => ({ to: 'in_rehabilitation', note: 'Eating well.' }),
				fields: [
					{
						field: 'note',
						payloads: someText,
						stored: async (_o, { fixture }) => {
							const [row] = await db()
								.select({ note: patientStatusLog.note })
								.from(patientStatusLog)
								.where(eq(patientStatusLog.patientId, fixture.id));
							return row?.note;
						}
					},
					{ field: 'to', payloads: fieldValues }
				]
			},
			{
				name: 'Newsroom: memorial note',
				action: patientActions.treatment,
				path: `/staff/newsroom/patients/${DIED}?/treatment`,
				params: () => ({ id: DIED }),
				user: () => educator,
				valid: () => ({ publicTreatment: 'memorial', memorialNote: 'We remember her.' }),
				fields: [
					{
						field: 'memorialNote',
						payloads: someText,
						stored: async () => (await patientRow(DIED)).memorialNote
					},
					{ field: 'publicTreatment', payloads: fieldValues }
				]
			},
			{
				name: 'Newsroom: hero photo and gallery with unknown photos',
				action: patientActions.addPhoto,
				path: `/staff/newsroom/patients/${EDITED}?/addPhoto`,
				params: () => ({ id: EDITED }),
				user: () => educator,
				valid: () => ({ mediaId: 'no-such-photo', caption: 'A caption' }),
				mustRefuse: true,
				fields: [
					{ field: 'mediaId', payloads: fieldValues.filter((p) => p.value !== undefined) },
					{ field: 'caption', payloads: someText.slice(0, 8) }
				]
			},
			{
				name: 'Newsroom: set hero photo',
				action: patientActions.hero,
				path: `/staff/newsroom/patients/${EDITED}?/hero`,
				params: () => ({ id: EDITED }),
				user: () => educator,
				valid: () => ({ mediaId: 'no-such-photo', heroAlt: 'A turtle' }),
				mustRefuse: true,
				fields: [{ field: 'mediaId', payloads: fieldValues }]
			},
			{
				name: 'Newsroom: move a photo',
				action: patientActions.movePhoto,
				path: `/staff/newsroom/patients/${EDITED}?/movePhoto`,
				params: () => ({ id: EDITED }),
				user: () => educator,
				valid: () => ({ mediaId: 'no-such-photo', direction: 'up' }),
				fields: [{ field: 'direction', payloads: fieldValues }]
			},
			{
				name: 'Newsroom: remove a gallery photo',
				action: patientActions.removePhoto,
				path: `/staff/newsroom/patients/${EDITED}?/removePhoto`,
				params: () => ({ id: EDITED }),
				user: () => educator,
				valid: () => ({ mediaId: 'no-such-photo' }),
				fields: [{ field: 'mediaId', payloads: fieldValues }]
			},
			{
				name: 'Newsroom: caption of an unknown photo',
				action: patientActions.caption,
				path: `/staff/newsroom/patients/${EDITED}?/caption`,
				params: () => ({ id: EDITED }),
				user: () => educator,
				valid: () => ({ mediaId: 'no-such-photo', caption: 'A caption' }),
				mustRefuse: true,
				fields: [
					{ field: 'mediaId', payloads: fieldValues },
					{ field: 'caption', payloads: someText }
				]
			},
			...(['cancelRelease', 'completeRelease'] as const).map((action) => ({
				name: `Newsroom: ${action} by id`,
				action: patientActions[action],
				path: `/staff/newsroom/patients/${EDITED}?/${action}`,
				params: () => ({ id: EDITED }),
				user: () => educator,
				valid: () => ({ releaseId: 'no-such-release' }),
				mustRefuse: true,
				fields: [{ field: 'releaseId', payloads: fieldValues }]
			})),
			{
				name: 'Newsroom: plan a release',
				action: patientActions.release,
				path: '/staff/newsroom/patients/x?/release',
				user: () => educator,
				prepare: async () => ({ id: await insertPatient('ready_for_release') }),
				params: (f) => ({ id: f.id }),
				valid: () => ({
					releaseOn: daysAgo(-10),
					publicArea: 'off the south coast',
					habitat: 'beach',
					siteNotes: 'North end of the beach.'
				}),
				fields: [
					{
						field: 'publicArea',
						payloads: someText,
						stored: async (_o, { fixture }) => {
							const [row] = await db()
								.select({ area: releases.publicArea })
								.from(releases)
								.where(eq(releases.patientId, fixture.id));
							return row?.area;
						}
					},
					{ field: 'siteNotes', payloads: someText },
					{ field: 'releaseId', payloads: fieldValues },
					{ field: 'siteLatitude', payloads: fieldValues },
					{ field: 'releaseOn', payloads: fieldValues },
					{ field: 'habitat', payloads: fieldValues }
				]
			},
			{
				name: 'Newsroom: new story',
				action: newStoryActions.default,
				path: '/staff/newsroom/stories/new',
				user: () => educator,
				valid: validStory,
				fields: [
					{ field: 'title', payloads: text, ...storyText('title'), check: renderedStory },
					{ field: 'summary', payloads: someText, ...storyText('summary'), check: renderedStory },
					{
						field: 'bodyMarkdown',
						payloads: text,
						...storyText('bodyMarkdown'),
						// the body is kept exactly as typed (no trim): it is markdown source
						expected: (received) => received,
						check: renderedStory
					},
					{ field: 'patientIds', payloads: fieldValues },
					{ field: 'heroMediaId', payloads: fieldValues },
					{ field: 'kind', payloads: fieldValues }
				]
			},
			{
				name: 'Newsroom: edit a story',
				action: storyActions.save,
				path: `/staff/newsroom/stories/${STORY}?/save`,
				params: () => ({ id: STORY }),
				user: () => educator,
				valid: validStory,
				fields: [
					{ field: 'title', payloads: someText, stored: async () => (await storyRow(STORY)).title }
				]
			},
			{
				name: 'Newsroom: story workflow',
				action: storyActions.workflow,
				path: `/staff/newsroom/stories/${STORY}?/workflow`,
				params: () => ({ id: STORY }),
				user: () => educator,
				valid: () => ({ action: 'schedule', publishAt: '2030-01-01T10:00', tzOffset: '0' }),
				fields: [
					{ field: 'action', payloads: fieldValues },
					{ field: 'publishAt', payloads: fieldValues },
					{ field: 'tzOffset', payloads: fieldValues }
				]
			},
			{
				name: 'Newsroom: story of an unknown id',
				action: storyActions.save,
				path: '/staff/newsroom/stories/{param}?/save',
				user: () => educator,
				valid: validStory,
				mustRefuse: true,
				fields: [{ field: 'id', in: 'params', payloads: PARAMS }]
			},
			{
				name: 'Newsroom: farewell note',
				action: farewellActions.approve,
				path: '/staff/newsroom/farewells?/approve',
				user: () => educator,
				prepare: async () => {
					const [row] = await db()
						.insert(patientEvents)
						.values({
							patientId: EDITED,
							kind: 'last_signal',
							dedupeKey: `hostile:${crypto.randomUUID()}`,
							payload: { silenceDays: 40 }
						})
						.returning({ id: patientEvents.id });
					return { eventId: String(row.id) };
				},
				valid: (f) => ({
					eventId: f.eventId,
					message: 'Her transmitter has gone quiet; thank you for following her.'
				}),
				fields: [
					{
						field: 'message',
						payloads: someText,
						stored: async (_o, { fixture }) => {
							const [row] = await db()
								.select({ message: patientEvents.message })
								.from(patientEvents)
								.where(eq(patientEvents.id, Number(fixture.eventId)));
							return row.message;
						}
					},
					{ field: 'eventId', payloads: fieldValues }
				]
			},
			{
				name: 'Newsroom: withhold a farewell',
				action: farewellActions.withhold,
				path: '/staff/newsroom/farewells?/withhold',
				user: () => educator,
				valid: () => ({ eventId: '2147483647' }),
				mustRefuse: true,
				fields: [{ field: 'eventId', payloads: fieldValues }]
			},
			{
				name: 'Ledger: manual gift',
				action: newGiftActions.default,
				path: '/staff/ledger/gifts/new',
				user: () => development,
				valid: () => ({
					supporterEmail: admin.email,
					amount: '50',
					receivedOn: daysAgo(2),
					method: 'cheque',
					reference: 'Cheque 1001'
				}),
				fields: [
					{
						field: 'reference',
						payloads: text,
						stored: async (_o, { form }) => {
							const [row] = await db()
								.select({ reference: gifts.reference })
								.from(gifts)
								.where(eq(gifts.reference, String(form.reference).trim()));
							return row?.reference;
						}
					},
					{ field: 'supporterEmail', payloads: [...EMAILS, ...SHAPES] },
					{ field: 'amount', payloads: fieldValues },
					{ field: 'receivedOn', payloads: fieldValues },
					{ field: 'method', payloads: fieldValues }
				]
			},
			{
				name: 'Ledger: new level',
				action: levelActions.create,
				path: '/staff/ledger/levels?/create',
				user: () => development,
				valid: validLevel,
				fields: [
					{
						field: 'name',
						payloads: text,
						stored: async (outcome) => {
							const id = (outcome as { data: { levelId: string } }).data.levelId;
							const [row] = await db()
								.select({ name: adoptionLevels.name })
								.from(adoptionLevels)
								.where(eq(adoptionLevels.id, id));
							return row.name;
						}
					},
					{
						field: 'description',
						payloads: someText,
						stored: async (outcome) => {
							const id = (outcome as { data: { levelId: string } }).data.levelId;
							const [row] = await db()
								.select({ description: adoptionLevels.description })
								.from(adoptionLevels)
								.where(eq(adoptionLevels.id, id));
							return row.description;
						}
					},
					{ field: 'goods', payloads: someText },
					{ field: 'amount', payloads: fieldValues },
					{ field: 'fairMarketValue', payloads: fieldValues },
					{ field: 'interval', payloads: fieldValues },
					{ field: 'kind', payloads: fieldValues }
				]
			},
			{
				name: 'Ledger: level changes by id',
				action: levelActions.move,
				path: '/staff/ledger/levels?/move',
				user: () => development,
				valid: () => ({ levelId: LEVEL, direction: 'up' }),
				fields: [
					{ field: 'levelId', payloads: fieldValues },
					{ field: 'direction', payloads: fieldValues }
				]
			},
			{
				name: 'Ledger: edit a level',
				action: levelActions.update,
				path: '/staff/ledger/levels?/update',
				user: () => development,
				valid: () => ({ ...validLevel(), levelId: LEVEL }),
				fields: [
					{ field: 'levelId', payloads: fieldValues },
					{
						field: 'name',
						payloads: someText,
						stored: async () => {
							const [row] = await db()
								.select({ name: adoptionLevels.name })
								.from(adoptionLevels)
								.where(eq(adoptionLevels.id, LEVEL));
							return row.name;
						}
					}
				]
			},
			...(['retire', 'restore'] as const).map((action) => ({
				name: `Ledger: ${action} a level by id`,
				action: levelActions[action],
				path: `/staff/ledger/levels?/${action}`,
				user: () => development,
				valid: () => ({ levelId: 'no-such-level' }),
				mustRefuse: true,
				fields: [{ field: 'levelId', payloads: fieldValues }]
			})),
			{
				name: 'Ledger: delete a level by id',
				action: levelActions.delete,
				path: '/staff/ledger/levels?/delete',
				user: () => development,
				valid: () => ({ levelId: 'no-such-level' }),
				mustRefuse: true,
				fields: [{ field: 'levelId', payloads: fieldValues }]
			},
			{
				name: 'Ledger: reconcile a payout',
				action: payoutActions.reconcile,
				path: '/staff/ledger/payouts/x?/reconcile',
				user: () => development,
				prepare: async () => {
					const id = `po_hostile_${crypto.randomUUID().slice(0, 8)}`;
					await db().insert(payouts).values({
						id,
						status: 'paid',
						amountCents: 0,
						currency: 'usd',
						arrivalDate: new Date()
					});
					return { id };
				},
				params: (f) => ({ id: f.id }),
				valid: () => ({ note: 'Matches the bank statement.' }),
				fields: [
					{
						field: 'note',
						payloads: someText,
						stored: async (_o, { fixture }) => {
							const [row] = await db()
								.select({ note: payouts.reconcileNote })
								.from(payouts)
								.where(eq(payouts.id, fixture.id));
							return row.note;
						},
						expected: (received) => received.trim() || null
					}
				]
			},
			{
				name: 'Ledger: note on an unknown payout',
				action: payoutActions.note,
				path: '/staff/ledger/payouts/{param}?/note',
				user: () => development,
				valid: () => ({ issueKey: 'charge:ch_x', note: 'Checked.' }),
				mustRefuse: true,
				params: () => ({ id: 'po_unknown' }),
				fields: [
					{ field: 'issueKey', payloads: fieldValues },
					{ field: 'note', payloads: someText },
					{ field: 'id', in: 'params', payloads: PARAMS }
				]
			},
			{
				name: 'Ledger: year-end statements',
				action: statementActions.send,
				path: '/staff/ledger/statements?/send',
				user: () => development,
				valid: () => ({ year: '2025' }),
				fields: [{ field: 'year', payloads: fieldValues }]
			},
			{
				name: 'Ledger: payment reminder',
				action: dashboardActions.remind,
				path: '/staff/ledger/dashboard?/remind',
				user: () => development,
				valid: () => ({ adoptionId: 'no-such-adoption' }),
				mustRefuse: true,
				fields: [{ field: 'adoptionId', payloads: fieldValues }]
			},
			{
				name: 'Settings',
				action: settingsActions.default,
				path: '/staff/settings',
				user: () => admin,
				valid: () => ({
					displayName: 'Example Turtle Hospital',
					legalName: 'Example Turtle Hospital Inc.',
					taxId: '00-0000000',
					postalAddress: '1 Example Road\nExample Town 00000',
					hotlineName: 'Example wildlife hotline',
					hotlineNumber: '(555) 555-0100',
					currency: 'usd',
					distanceUnit: 'km'
				}),
				fields: [
					{
						field: 'displayName',
						payloads: text,
						stored: async () => (await db().select().from(organisationSettings))[0].displayName
					},
					{
						field: 'postalAddress',
						payloads: someText,
						stored: async () => (await db().select().from(organisationSettings))[0].postalAddress
					},
					{ field: 'legalName', payloads: someText },
					{ field: 'hotlineName', payloads: someText },
					{ field: 'hotlineNumber', payloads: fieldValues },
					{ field: 'taxId', payloads: fieldValues },
					{ field: 'currency', payloads: fieldValues },
					{ field: 'distanceUnit', payloads: fieldValues }
				]
			},
			{
				name: 'People: invite',
				action: userActions.invite,
				path: '/staff/users?/invite',
				user: () => admin,
				valid: () => ({
					name: 'New Staff',
					email: `${crypto.randomUUID().slice(0, 8)}@example.test`,
					roles: 'educator'
				}),
				fields: [
					{
						field: 'name',
						payloads: someText,
						stored: async (_o, { form }) => {
							const [row] = await db()
								.select({ name: users.name })
								.from(users)
								.where(eq(users.email, String(form.email)));
							return row?.name;
						}
					},
					{ field: 'email', payloads: [...EMAILS, ...SHAPES] },
					{ field: 'roles', payloads: fieldValues }
				]
			},
			{
				name: 'People: grant a role',
				action: userActions.grant,
				path: '/staff/users?/grant',
				user: () => admin,
				valid: () => ({ userId: 'no-such-user', role: 'educator' }),
				mustRefuse: true,
				fields: [
					{ field: 'userId', payloads: fieldValues },
					{ field: 'role', payloads: fieldValues }
				]
			},
			{
				name: 'People: revoke a role',
				action: userActions.revoke,
				path: '/staff/users?/revoke',
				user: () => admin,
				valid: () => ({ userId: 'no-such-user', role: 'educator' }),
				fields: [
					{ field: 'userId', payloads: fieldValues },
					{ field: 'role', payloads: fieldValues }
				]
			},
			{
				name: 'People: enable an account',
				action: userActions.enable,
				path: '/staff/users?/enable',
				user: () => admin,
				valid: () => ({ userId: 'no-such-user' }),
				mustRefuse: true,
				fields: [{ field: 'userId', payloads: fieldValues }]
			},
			{
				name: 'People: disable an account',
				action: userActions.disable,
				path: '/staff/users?/disable',
				user: () => admin,
				valid: () => ({ userId: 'no-such-user' }),
				mustRefuse: true,
				fields: [{ field: 'userId', payloads: fieldValues }]
			},
			{
				name: 'Mail templates: test send',
				action: templateActions.sendTest,
				path: '/staff/mail/templates?/sendTest',
				user: () => admin,
				valid: () => ({ template: 'no-such-template' }),
				mustRefuse: true,
				fields: [{ field: 'template', payloads: fieldValues }]
			},
			{
				name: 'Outbox: retry',
				action: outboxActions.retry,
				path: '/staff/outbox?/retry',
				user: () => admin,
				valid: () => ({ id: '999999' }),
				mustRefuse: true,
				fields: [{ field: 'id', payloads: fieldValues }]
			},
			{
				name: 'Tracking desk: rules',
				action: deskActions.settings,
				path: '/staff/tracking?/settings',
				user: () => tracker,
				valid: () => ({ waypointStepKm: '500', silenceDays: '30', inlandMetres: '5000' }),
				fields: [
					{ field: 'waypointStepKm', payloads: fieldValues },
					{ field: 'silenceDays', payloads: fieldValues },
					{ field: 'inlandMetres', payloads: fieldValues }
				]
			},
			{
				name: 'Tracking desk: a patient’s settings',
				action: trackingActions.settings,
				path: `/staff/tracking/${TRACKED}?/settings`,
				params: () => ({ slug: TRACKED }),
				user: () => tracker,
				valid: () => ({ delayDays: '7', cellDeg: '0.1', minimumClass: 'B', maxSpeedMs: '' }),
				fields: [
					{ field: 'delayDays', payloads: fieldValues },
					{ field: 'cellDeg', payloads: fieldValues },
					{ field: 'minimumClass', payloads: fieldValues },
					{ field: 'maxSpeedMs', payloads: fieldValues }
				]
			},
			{
				name: 'Tracking desk: transmitter',
				action: trackingActions.transmitter,
				path: `/staff/tracking/${TRACKED}?/transmitter`,
				params: () => ({ slug: TRACKED }),
				user: () => tracker,
				valid: () => ({ transmitterId: 'TX-HOSTILE' }),
				fields: [{ field: 'transmitterId', payloads: someText }]
			},
			{
				name: 'Tracking desk: unknown patient address',
				action: trackingActions.transmitter,
				path: '/staff/tracking/{param}?/transmitter',
				user: () => tracker,
				valid: () => ({ transmitterId: 'TX-1' }),
				mustRefuse: true,
				fields: [{ field: 'slug', in: 'params', payloads: PARAMS }]
			}
		];
		return surfaces;
	},
	1000
);
