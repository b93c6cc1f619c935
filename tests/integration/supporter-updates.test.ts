// Supporter updates: patient events fanned out to the right people through the outbox, with the
// RFC 8058 one-click unsubscribe, once per (event, address) across crashes, and never while the
// organisation's postal address is missing.
import { and, asc, count, eq, inArray, isNull, sql } from 'drizzle-orm';
import { isActionFailure } from '@sveltejs/kit';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import type { SessionUser } from '$lib/server/auth/lucia';
import {
	adoptionLevels,
	adoptions,
	caughtMail,
	journeys,
	mailPreferences,
	organisationSettings,
	outbox,
	patientEvents,
	patients,
	stories,
	storyPatients,
	users
} from '$lib/server/db/schema';
import { startCatcher, type Catcher } from '$lib/server/mail/catcher';
import { getPreferences, savePreferences } from '$lib/server/mail/preferences';
import { createMailTransport, type MailTransport } from '$lib/server/mail/transport';
import { runOutboxOnce } from '$lib/server/mail/worker';
import { approveFarewell, FarewellRefused } from '$lib/server/updates/farewells';
import { fanOutEvent, fanOutPending } from '$lib/server/updates/fanout';
import {
	forgetSigningKey,
	readUnsubscribeToken,
	signingKey,
	unsubscribeToken
} from '$lib/server/updates/tokens';
import {
	GET as unsubscribeGet,
	POST as unsubscribePost
} from '../../src/routes/api/unsubscribe/[token]/+server';
import {
	actions as preferenceActions,
	load as preferencesLoad
} from '../../src/routes/preferences/[token]/+page.server';
import { actions as farewellActions } from '../../src/routes/staff/newsroom/farewells/+page.server';
import { useTestDatabase } from '../setup/test-db';

process.env.MAIL_WORKER = 'off';
process.env.ORIGIN = 'https://tideward.example';
const db = useTestDatabase();

const PATIENT = crypto.randomUUID();
const CROWD = crypto.randomUUID();
const LEVEL = crypto.randomUUID();
const ADDRESS = '1 Shore Road\nPunta Ejemplo, PR 00000';

async function patient(id: string, slug: string, name: string) {
	await db().insert(patients).values({
		id,
		slug,
		name,
		species: 'green',
		lifeStage: 'juvenile',
		admittedOn: '2026-01-01',
		admissionReason: 'entanglement',
		status: 'released'
	});
}

async function adoption(
	patientId: string,
	email: string,
	values: Partial<typeof adoptions.$inferInsert> = {}
) {
	await db()
		.insert(adoptions)
		.values({
			id: crypto.randomUUID(),
			patientId,
			levelId: LEVEL,
			kind: 'self',
			status: 'active',
			interval: 'once',
			amountCents: 2500,
			currency: 'usd',
			supporterEmail: email,
			supporterName: email.split('@')[0],
			...values
		});
}

async function event(
	patientId: string,
	kind: (typeof patientEvents.$inferInsert)['kind'],
	payload: Record<string, unknown>
) {
	const [row] = await db()
		.insert(patientEvents)
		.values({ patientId, kind, payload, dedupeKey: `${kind}:${crypto.randomUUID()}` })
		.returning();
	return row;
}

const updatesFor = (eventId: number) =>
	db()
		.select()
		.from(outbox)
		.where(eq(outbox.patientEventId, eventId))
		.orderBy(asc(outbox.toAddress));

async function setAddress(address: string) {
	await db()
		.insert(organisationSettings)
		.values({
			id: 1,
			displayName: 'Punta Ejemplo Turtle Hospital',
			legalName: 'Punta Ejemplo Turtle Hospital, Inc.',
			postalAddress: address
		})
		.onConflictDoUpdate({ target: organisationSettings.id, set: { postalAddress: address } });
}

function page(path: string, form?: Record<string, string>, user: SessionUser | null = null) {
	const url = new URL(`https://tideward.example${path}`);
	let request = new Request(url);
	if (form) {
		const body = new FormData();
		for (const [k, v] of Object.entries(form)) body.append(k, v);
		request = new Request(url, { method: 'POST', body });
	}
	return { request, url, locals: { user, session: null, requestId: 't' } };
}

beforeAll(async () => {
	forgetSigningKey();
	await patient(PATIENT, 'updates-test', 'Brisa');
	await patient(CROWD, 'updates-crowd', 'Oleaje');
	await db()
		.insert(adoptionLevels)
		.values({ id: LEVEL, slug: 'ripple-u', name: 'Ripple', amountCents: 2500, interval: 'once' });
	await setAddress(ADDRESS);

	// Brisa's people, one of each kind.
	await adoption(PATIENT, 'ana@example.test'); // current, self
	await adoption(PATIENT, 'ANA@example.test'); // the same address again
	await adoption(PATIENT, 'bea@example.test', {
		kind: 'gift',
		recipientEmail: 'carla@example.test',
		recipientName: 'Carla',
		giftNotifiedAt: new Date()
	});
	await adoption(PATIENT, 'dario@example.test', {
		kind: 'gift',
		recipientEmail: 'not-told-yet@example.test',
		recipientName: 'Later',
		deliverOn: '2099-01-01'
	});
	await adoption(PATIENT, 'teacher@example.test', {
		kind: 'classroom',
		teacherName: 'Ms Rivera',
		schoolName: 'Escuela Ejemplo',
		classSize: 24
	});
	await adoption(PATIENT, 'gone@example.test', { status: 'cancelled', endedAt: new Date() });
	await adoption(PATIENT, 'stays@example.test', { status: 'ended', endedAt: new Date() });
	await savePreferences(db(), 'stays@example.test', { keepFollowing: true });
	await adoption(PATIENT, 'pending@example.test', { status: 'pending' });
	await adoption(PATIENT, 'quiet@example.test');
	await savePreferences(db(), 'quiet@example.test', { homecoming: false });
});

describe('who hears about an event', () => {
	it('current adopters, told gift recipients, classroom contacts and those who keep following; each once', async () => {
		const released = await event(PATIENT, 'released', {
			releaseOn: '2026-11-20',
			publicArea: 'off the north coast',
			habitat: 'beach'
		});
		expect(await fanOutPending()).toMatchObject({ queued: 6 });
		const rows = await updatesFor(released.id);
		expect(rows.map((r) => r.toAddress)).toEqual([
			'ana@example.test',
			'bea@example.test',
			'carla@example.test',
			'dario@example.test',
			'stays@example.test',
			'teacher@example.test'
		]);
		const carla = rows.find((r) => r.toAddress === 'carla@example.test')!;
		expect(carla.category).toBe('homecoming');
		expect(carla.subject).toContain('Brisa');
		expect(carla.text).toContain('off the north coast');
		expect(carla.text).toContain('was adopted for you');
		expect(carla.text).toContain('1 Shore Road'); // CAN-SPAM: the postal address in every footer
		const teacher = rows.find((r) => r.toAddress === 'teacher@example.test')!;
		expect(teacher.text).toContain('Ms Rivera');
		expect(teacher.text).toContain('your class adopted');

		const [done] = await db().select().from(patientEvents).where(eq(patientEvents.id, released.id));
		expect(done).toMatchObject({ outcome: 'sent', recipientCount: 6 });
		expect(done.processedAt).not.toBeNull();

		// Running again sends nothing more.
		expect(await fanOutPending()).toMatchObject({ queued: 0 });
		expect(await fanOutEvent(done)).toBe(0);
		expect(await updatesFor(released.id)).toHaveLength(6);
	});

	it('carries the RFC 8058 headers: an HTTPS URL that names address and list, and One-Click', async () => {
		const story = crypto.randomUUID();
		await db().insert(stories).values({
			id: story,
			slug: 'brisa-field-note',
			title: 'Brisa finds the seagrass',
			kind: 'journey',
			summary: 'A week of slow feeding in the shallows.',
			status: 'published',
			publishedAt: new Date()
		});
		await db().insert(storyPatients).values({ storyId: story, patientId: PATIENT });
		const published = await event(PATIENT, 'story_published', { storyId: story });
		await fanOutPending();
		const [ana] = (await updatesFor(published.id)).filter(
			(r) => r.toAddress === 'ana@example.test'
		);
		// RFC 8058 section 3.1: "List-Unsubscribe: <https://…>" and
		// "List-Unsubscribe-Post: List-Unsubscribe=One-Click".
		expect(ana.headers['List-Unsubscribe-Post']).toBe('List-Unsubscribe=One-Click');
		const url = /^<(https:\/\/[^>]+)>$/.exec(ana.headers['List-Unsubscribe'])![1];
		expect(url).toMatch(
			/^https:\/\/tideward\.example\/api\/unsubscribe\/[A-Za-z0-9_-]+\.[A-Za-z0-9_-]{43}$/
		);
		const token = url.split('/').at(-1)!;
		expect(readUnsubscribeToken(await signingKey(), token)).toEqual({
			email: 'ana@example.test',
			category: 'fieldNote'
		});
		expect(ana.html).toContain(url); // the visible link in the footer too
		expect(ana.text).toContain(`https://tideward.example/preferences/${token}`);
		expect(ana.text).toContain('Brisa finds the seagrass');
	});

	it('never sends a story that was taken down before the fan-out', async () => {
		const story = crypto.randomUUID();
		await db().insert(stories).values({
			id: story,
			slug: 'brisa-archived',
			title: 'Taken down',
			kind: 'general',
			status: 'archived'
		});
		const gone = await event(PATIENT, 'story_published', { storyId: story });
		await fanOutPending();
		expect(await updatesFor(gone.id)).toHaveLength(0);
		const [row] = await db().select().from(patientEvents).where(eq(patientEvents.id, gone.id));
		expect(row.outcome).toMatch(/^withheld/);
	});
});

describe('one-click unsubscribe and the preferences page', () => {
	it('turns the list off at once on a POST without cookies, and answers without a redirect', async () => {
		const key = await signingKey();
		const token = unsubscribeToken(key, { email: 'bea@example.test', category: 'waypoint' });
		const response = await unsubscribePost({
			params: { token },
			request: new Request(`https://tideward.example/api/unsubscribe/${token}`, {
				method: 'POST',
				headers: { 'content-type': 'application/x-www-form-urlencoded' },
				body: 'List-Unsubscribe=One-Click'
			})
		} as never);
		// RFC 8058 section 3.2: the POST carries no cookie and must not need one; no redirect.
		expect(response.status).toBe(200);
		expect(await getPreferences(db(), 'bea@example.test')).toMatchObject({
			waypoint: false,
			homecoming: true
		});
	});

	it('refuses a forged or altered token and changes nothing', async () => {
		const key = await signingKey();
		const good = unsubscribeToken(key, { email: 'ana@example.test', category: 'homecoming' });
		const [payload, signature] = good.split('.');
		const otherPayload = Buffer.from(JSON.stringify(['ana@example.test', 'waypoint'])).toString(
			'base64url'
		);
		const flipped = signature.slice(0, -1) + (signature.endsWith('A') ? 'B' : 'A');
		const before = await db().select().from(mailPreferences);
		for (const token of [
			`${otherPayload}.${signature}`, // list changed, signature kept
			`${payload}.${flipped}`, // signature altered
			unsubscribeToken(Buffer.alloc(32, 7), { email: 'ana@example.test', category: 'homecoming' }),
			'not-a-token',
			`${payload}.`,
			'x'.repeat(5000)
		]) {
			const response = await unsubscribePost({
				params: { token },
				request: new Request('https://tideward.example/api/unsubscribe/x', { method: 'POST' })
			} as never);
			expect(response.status, token).toBe(400);
			expect((await unsubscribeGet({ params: { token } } as never)).status).toBe(400);
		}
		expect(await db().select().from(mailPreferences)).toEqual(before);
	});

	it('opens the preferences page from the footer link without signing in, and saves there', async () => {
		const key = await signingKey();
		const token = unsubscribeToken(key, { email: 'teacher@example.test', category: 'fieldNote' });
		const data = (await preferencesLoad({
			...page(`/preferences/${token}`),
			params: { token },
			setHeaders: () => {}
		} as never)) as { email: string; preferences: Record<string, boolean> };
		expect(data.email).toBe('teacher@example.test');
		expect(data.preferences.fieldNote).toBe(true);
		const result = await preferenceActions.default({
			...page(`/preferences/${token}`, { homecoming: 'on', waypoint: 'on' }),
			params: { token }
		} as never);
		expect(isActionFailure(result)).toBe(false);
		expect(await getPreferences(db(), 'teacher@example.test')).toMatchObject({
			homecoming: true,
			waypoint: true,
			fieldNote: false,
			lastSignal: false
		});
		const refused = await preferenceActions.default({
			...page('/preferences/bad', { homecoming: 'on' }),
			params: { token: 'bad' }
		} as never);
		expect(isActionFailure(refused)).toBe(true);
	});
});

describe('what holds updates back', () => {
	beforeEach(() => setAddress(ADDRESS));

	it('does not send news that is older than two weeks', async () => {
		const stale = await event(PATIENT, 'released', { releaseOn: '2026-01-01', publicArea: 'west' });
		await db()
			.update(patientEvents)
			.set({ occurredAt: new Date(Date.now() - 15 * 86_400_000) })
			.where(eq(patientEvents.id, stale.id));
		await fanOutPending();
		expect(await updatesFor(stale.id)).toHaveLength(0);
		const [row] = await db().select().from(patientEvents).where(eq(patientEvents.id, stale.id));
		expect(row.outcome).toBe('withheld: older than 14 days');
	});

	it('sends no update while the organisation has no postal address', async () => {
		await setAddress('  ');
		const released = await event(CROWD, 'released', {
			releaseOn: '2026-11-01',
			publicArea: 'east'
		});
		await adoption(CROWD, 'crowd-one@example.test');
		expect(await fanOutPending()).toEqual({ events: 0, queued: 0, blocked: 'postal-address' });
		expect(await updatesFor(released.id)).toHaveLength(0);
		await setAddress(ADDRESS);
		await fanOutPending();
		expect(await updatesFor(released.id)).toHaveLength(1);
	});

	it('announces only the latest of several steps crossed at once, from the public projection', async () => {
		await db()
			.insert(journeys)
			.values({
				patientId: PATIENT,
				geojson: { type: 'FeatureCollection', features: [], properties: {} },
				etag: 'e1',
				cutoffDate: '2026-11-25'
			});
		const payload = {
			distanceKm: 1012,
			distanceMi: 629,
			cutoffDate: '2026-11-25',
			daysSinceRelease: 5
		};
		const first = await event(PATIENT, 'waypoint', { ...payload, thresholdKm: 500 });
		const second = await event(PATIENT, 'waypoint', { ...payload, thresholdKm: 1000 });
		await fanOutPending();
		expect(await updatesFor(first.id)).toHaveLength(0);
		const sent = await updatesFor(second.id);
		// bea@ turned waypoint updates off by one click above.
		expect(sent.map((r) => r.toAddress)).not.toContain('bea@example.test');
		expect(sent.length).toBeGreaterThan(0);
		expect(sent[0].text).toContain('1,012 km (629 mi)');
		expect(sent[0].html).toContain('https://tideward.example/patients/updates-test/journey.png');
		const [row] = await db().select().from(patientEvents).where(eq(patientEvents.id, first.id));
		expect(row.outcome).toBe('superseded');
	});

	it('holds a last signal until staff write the note, and sends their words', async () => {
		const quiet = await event(PATIENT, 'last_signal', { silenceDays: 30 });
		await fanOutPending();
		expect(await updatesFor(quiet.id)).toHaveLength(0);

		const [educator] = await db()
			.insert(users)
			.values({ id: crypto.randomUUID(), email: 'edu@example.test', name: 'An Educator' })
			.returning();
		const asEducator = { ...educator, roles: ['educator'] } as SessionUser;
		const asSupporter = { ...educator, roles: ['supporter'] } as SessionUser;
		await expect(
			farewellActions.approve(
				page(
					'/staff/newsroom/farewells',
					{ eventId: String(quiet.id), message: 'x'.repeat(40) },
					asSupporter
				) as never
			)
		).rejects.toMatchObject({ status: 403 });
		const tooShort = await farewellActions.approve(
			page(
				'/staff/newsroom/farewells',
				{ eventId: String(quiet.id), message: 'Bye.' },
				asEducator
			) as never
		);
		expect(isActionFailure(tooShort)).toBe(true);
		await fanOutPending();
		expect(await updatesFor(quiet.id)).toHaveLength(0);

		const words =
			'Brisa’s tag has gone quiet after a long season at sea. Thank you for following her.';
		const ok = await farewellActions.approve(
			page(
				'/staff/newsroom/farewells',
				{ eventId: String(quiet.id), message: words },
				asEducator
			) as never
		);
		expect(isActionFailure(ok)).toBe(false);
		await expect(approveFarewell(quiet.id, words, educator.id)).rejects.toBeInstanceOf(
			FarewellRefused
		);
		await fanOutPending();
		const sent = await updatesFor(quiet.id);
		expect(sent.length).toBeGreaterThan(0);
		expect(sent[0].text).toContain(words);
	});
});

describe('5,000 updates, a crash in the middle, and a restart', () => {
	let catcher: Catcher;
	let transport: MailTransport;
	const SIZE = 5000;

	beforeAll(async () => {
		catcher = await startCatcher({ database: db });
		transport = createMailTransport({ port: catcher.port });
		const rows = Array.from({ length: SIZE }, (_, i) => ({
			id: crypto.randomUUID(),
			patientId: CROWD,
			levelId: LEVEL,
			kind: 'self' as const,
			status: 'active' as const,
			interval: 'once' as const,
			amountCents: 2500,
			currency: 'usd',
			supporterEmail: `crowd-${String(i).padStart(5, '0')}@example.test`,
			supporterName: `Crowd ${i}`
		}));
		for (let i = 0; i < rows.length; i += 1000) {
			await db()
				.insert(adoptions)
				.values(rows.slice(i, i + 1000));
		}
	});

	afterAll(async () => {
		transport?.close();
		await catcher?.close();
	});

	it('delivers each update exactly once to the SMTP catcher', { timeout: 600_000 }, async () => {
		await db().delete(outbox);
		await db().delete(caughtMail);
		const story = crypto.randomUUID();
		await db().insert(stories).values({
			id: story,
			slug: 'oleaje-note',
			title: 'Oleaje heads east',
			kind: 'journey',
			summary: 'A fast week.',
			status: 'published',
			publishedAt: new Date()
		});
		const note = await event(CROWD, 'story_published', { storyId: story });
		const expected = SIZE + 1; // the crowd and crowd-one@ from the test above

		// The fan-out dies after two chunks (as if the process were killed there).
		class Killed extends Error {}
		await expect(
			fanOutEvent(note, {
				chunkSize: 250,
				leaseMs: 50,
				afterChunk: (n) => {
					if (n >= 500) throw new Killed();
				}
			})
		).rejects.toBeInstanceOf(Killed);
		expect(await updatesFor(note.id)).toHaveLength(500);

		// A worker sends part of it, then dies in the middle of a batch: some messages reached
		// the catcher but were never marked sent.
		expect(await runOutboxOnce({ database: db(), transport, batchSize: 100 })).toMatchObject({
			sent: 100
		});
		let handed = 0;
		let died: () => void;
		const dead = new Promise<void>((resolve) => (died = resolve));
		const dying = {
			sendMail: async (message: unknown) => {
				if (handed++ >= 30) {
					died();
					return new Promise(() => {}); // never answers: the process is gone
				}
				return transport.sendMail(message as never);
			}
		} as unknown as MailTransport;
		void runOutboxOnce({ database: db(), transport: dying, batchSize: 100, leaseMs: 50 });
		await dead;
		const [{ delivered }] = await db().select({ delivered: count() }).from(caughtMail);
		expect(delivered).toBe(130);

		// Restart: the fan-out resumes (its lease ran out), the workers send what is left.
		await new Promise((r) => setTimeout(r, 100));
		await fanOutPending({ chunkSize: 500 });
		// (Bounded: rows still leased by the dead worker come free once their lease runs out.)
		for (let i = 0; i < 600; i++) {
			const run = await runOutboxOnce({ database: db(), transport, batchSize: 200 });
			if (run.claimed > 0) continue;
			const [{ left }] = await db()
				.select({ left: count() })
				.from(outbox)
				.where(eq(outbox.status, 'pending'));
			if (left === 0) break;
			await new Promise((r) => setTimeout(r, 50));
		}

		expect(await updatesFor(note.id)).toHaveLength(expected);
		const pending = await db()
			.select({ n: count() })
			.from(outbox)
			.where(and(eq(outbox.patientEventId, note.id), sql`${outbox.status} <> 'sent'`));
		expect(pending[0].n).toBe(0);
		const perAddress = await db()
			.select({ to: sql<string>`${caughtMail.envelopeTo}[1]`, n: count() })
			.from(caughtMail)
			.groupBy(sql`${caughtMail.envelopeTo}[1]`);
		expect(perAddress).toHaveLength(expected);
		expect(perAddress.every((r) => r.n === 1)).toBe(true);
		const [row] = await db().select().from(patientEvents).where(eq(patientEvents.id, note.id));
		expect(row).toMatchObject({ outcome: 'sent', recipientCount: expected });
		expect(
			await db()
				.select({ id: patientEvents.id })
				.from(patientEvents)
				.where(and(isNull(patientEvents.processedAt), inArray(patientEvents.patientId, [CROWD])))
		).toEqual([]);
	});

	it('leaves updates queued, not lost, when the SMTP server refuses connections', async () => {
		await db().delete(outbox);
		const closed = createMailTransport({ port: 1 }); // nothing listens on port 1 of loopback
		const released = await event(CROWD, 'waypoint', {
			distanceKm: 500,
			distanceMi: 311,
			cutoffDate: '2026-11-20',
			daysSinceRelease: 19
		});
		await fanOutEvent(released, { chunkSize: 2000 });
		const queued = (await updatesFor(released.id)).length;
		expect(queued).toBe(SIZE + 1);
		const run = await runOutboxOnce({ database: db(), transport: closed, batchSize: 20 });
		expect(run).toMatchObject({ claimed: 20, sent: 0, retrying: 20 });
		const states = await db()
			.select({ status: outbox.status, n: count() })
			.from(outbox)
			.where(eq(outbox.patientEventId, released.id))
			.groupBy(outbox.status);
		expect(states).toEqual([{ status: 'pending', n: SIZE + 1 }]);
		closed.close();
	});
});
