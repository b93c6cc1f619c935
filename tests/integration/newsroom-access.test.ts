import { isHttpError, isRedirect } from '@sveltejs/kit';
import { describe, expect, it } from 'vitest';
import type { SessionUser } from '$lib/server/auth/lucia';
import {
	auditLog,
	patientEvents,
	patientPhotos,
	patients,
	patientStatusLog,
	releases
} from '$lib/server/db/schema';
import { createPatient } from '$lib/server/newsroom/patients';
import { useTestDatabase } from '../setup/test-db';
import { daysAgo, fakeEvent, people, rows } from './newsroom-helpers';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();
const person = people(db);

type Handler = (event: never) => unknown;
interface RouteModule {
	load?: Handler;
	actions?: Record<string, Handler>;
}

// Every Newsroom page, found on disk, so that a page added later is covered without editing
// this file. The role gate runs before any form is read, so an empty form suffices.
const pages = import.meta.glob<RouteModule>('../../src/routes/staff/newsroom/**/+page.server.ts', {
	eager: true
});

const endpoints = import.meta.glob<Record<string, Handler>>(
	'../../src/routes/staff/newsroom/**/+server.ts',
	{ eager: true }
);
const METHODS = ['GET', 'POST', 'PUT', 'PATCH', 'DELETE'];

function urlOf(file: string, id: string): string {
	return file
		.replace('../../src/routes', '')
		.replace(/\/\+(page\.server|server)\.ts$/, '')
		.replace(/\[[^\]]+\]/g, id);
}

async function statusOf(call: () => unknown): Promise<number | string> {
	try {
		await call();
		return 'allowed';
	} catch (error) {
		if (isHttpError(error)) return error.status;
		if (isRedirect(error)) return `redirect ${error.location.split('?')[0]}`;
		throw error;
	}
}

async function counts() {
	return Promise.all(
		[patients, patientStatusLog, releases, patientEvents, patientPhotos, auditLog].map((t) =>
			rows(db, t)
		)
	);
}

describe('Newsroom access', () => {
	it('finds the patient pages among the Newsroom routes', () => {
		const files = Object.keys(pages);
		expect(files).toContain('../../src/routes/staff/newsroom/patients/[id]/+page.server.ts');
		expect(files).toContain('../../src/routes/staff/newsroom/patients/new/+page.server.ts');
	});

	it('answers a supporter or a tracker with 403 and a visitor with 401 on every load and action, writing nothing', async () => {
		const educator = await person(['educator']);
		const { id } = await createPatient(
			{
				name: 'Guarded',
				species: 'hawksbill',
				lifeStage: 'juvenile',
				carapaceLengthCm: null,
				weightKg: null,
				admittedOn: daysAgo(3),
				admissionReason: 'entanglement',
				summary: '',
				strandedOn: null,
				strandingPlace: null,
				strandingLatitude: null,
				strandingLongitude: null,
				flipperTags: [],
				microchip: null,
				transmitterId: null,
				medicalNotes: null,
				agencyCaseNumber: null
			},
			educator
		);
		const outsiders: [SessionUser | null, number][] = [
			[await person(['supporter']), 403],
			[await person(['tracker']), 403],
			[await person(['tracker', 'development', 'supporter']), 403],
			[null, 401]
		];
		const before = await counts();
		const seen: string[] = [];
		for (const [file, mod] of Object.entries(pages)) {
			const path = urlOf(file, id);
			const params = { id };
			for (const [user, expected] of outsiders) {
				if (mod.load) {
					const status = await statusOf(() =>
						mod.load!(fakeEvent(path, user, {}, params, 'GET') as never)
					);
					// A visitor asking for a page is sent to sign in.
					expect(status, `${path} load`).toBe(user ? expected : 'redirect /signin');
				}
				for (const [name, action] of Object.entries(mod.actions ?? {})) {
					const form = { mediaId: 'x', releaseId: 'x', to: 'died', confirmFinal: 'on' };
					const status = await statusOf(() =>
						action(fakeEvent(`${path}?/${name}`, user, form, params) as never)
					);
					expect(status, `${path} ?/${name} as ${user?.roles.join('+') ?? 'visitor'}`).toBe(
						expected
					);
					seen.push(`${path}?/${name}`);
				}
			}
		}
		for (const [file, mod] of Object.entries(endpoints)) {
			const path = urlOf(file, id);
			for (const method of METHODS.filter((m) => typeof mod[m] === 'function')) {
				for (const [user, expected] of outsiders) {
					const event = fakeEvent(path, user, {}, { id }, method === 'GET' ? 'GET' : 'POST');
					const status = await statusOf(() => mod[method](event));
					const visitorPage = !user && method === 'GET';
					expect(status, `${method} ${path}`).toBe(visitorPage ? 'redirect /signin' : expected);
					seen.push(`${method} ${path}`);
				}
			}
		}
		expect(seen).toEqual(
			expect.arrayContaining([
				'/staff/newsroom/patients/new?/create',
				`/staff/newsroom/patients/${id}?/status`,
				`/staff/newsroom/patients/${id}?/completeRelease`,
				`/staff/newsroom/patients/${id}?/treatment`
			])
		);
		expect(await counts()).toEqual(before);
	});
});
