import { and, count, eq, isNotNull, isNull } from 'drizzle-orm';
import { beforeAll, describe, expect, it } from 'vitest';
import {
	patientEvents,
	patients,
	patientStatusLog,
	releases,
	stories,
	storyPatients
} from '$lib/server/db/schema';
import { seedDemo } from '$lib/server/db/seed/demo';
import { renderMarkdown } from '$lib/server/newsroom/markdown';
import { useTestDatabase } from '../setup/test-db';

const db = useTestDatabase();

beforeAll(async () => {
	await seedDemo(db(), new Date('2026-06-15T12:00:00Z'));
});

describe('demo stories, releases and status history', () => {
	it('publishes 6 to 8 stories of several kinds, each about a patient, and keeps a draft and one in review', async () => {
		const rows = await db().select().from(stories);
		const published = rows.filter((s) => s.status === 'published');
		expect(published.length).toBeGreaterThanOrEqual(6);
		expect(published.length).toBeLessThanOrEqual(8);
		expect(new Set(published.map((s) => s.kind)).size).toBeGreaterThanOrEqual(4);
		expect(rows.filter((s) => s.status === 'draft')).toHaveLength(1);
		expect(rows.filter((s) => s.status === 'in_review')).toHaveLength(1);
		const linked = new Set((await db().select().from(storyPatients)).map((l) => l.storyId));
		for (const story of rows) {
			expect(linked.has(story.id), story.slug).toBe(true);
			// The stored HTML is exactly what the Newsroom's sanitizer makes of the markdown.
			expect(story.bodyHtml, story.slug).toBe(renderMarkdown(story.bodyMarkdown));
			expect(story.bodyHtml).not.toMatch(/<script|on\w+=/i);
			if (story.status === 'published') {
				expect(story.publishedAt, story.slug).toBeInstanceOf(Date);
				expect(story.approvedBy, story.slug).not.toBe(story.authorId);
			} else {
				expect(story.publishedAt).toBeNull();
			}
		}
	});

	it('records a completed release, with its paperwork, for every released patient', async () => {
		const released = await db().select().from(patients).where(eq(patients.status, 'released'));
		expect(released.length).toBeGreaterThan(0);
		for (const patient of released) {
			const [release] = await db()
				.select()
				.from(releases)
				.where(and(eq(releases.patientId, patient.id), isNotNull(releases.doneAt)));
			expect(release, patient.slug).toBeDefined();
			expect(release.publicArea).toMatch(/\w/);
			expect(release.authorisationRef).toBeTruthy();
			expect(release.vetClearedBy).toBeTruthy();
			expect(release.vetClearedOn! <= release.releaseOn).toBe(true);
			expect(release.releaseOn >= patient.admittedOn).toBe(true);
			expect(release.siteLatitude).toBeTruthy();
			const events = await db()
				.select()
				.from(patientEvents)
				.where(and(eq(patientEvents.patientId, patient.id), eq(patientEvents.kind, 'released')));
			expect(events).toHaveLength(1);
			// Already told: no homecoming update goes out for the demo's history.
			expect(events[0].processedAt).not.toBeNull();
		}
	});

	it("logs each patient's history, starting at admission and ending at the current status", async () => {
		const all = await db().select().from(patients);
		for (const patient of all) {
			const log = await db()
				.select()
				.from(patientStatusLog)
				.where(eq(patientStatusLog.patientId, patient.id))
				.orderBy(patientStatusLog.changedAt);
			expect(log.length, patient.slug).toBeGreaterThan(0);
			expect(log[0]).toMatchObject({ fromStatus: null, toStatus: 'admitted' });
			expect(log.at(-1)!.toStatus, patient.slug).toBe(patient.status);
			for (let i = 1; i < log.length; i++) {
				expect(log[i].fromStatus).toBe(log[i - 1].toStatus);
			}
		}
	});

	it('stores no unprocessed event, so no e-mail is sent for the demo history', async () => {
		const pending = await db()
			.select()
			.from(patientEvents)
			.where(isNull(patientEvents.processedAt));
		expect(pending).toHaveLength(0);
		const [{ n }] = await db().select({ n: count() }).from(patientEvents);
		expect(n).toBeGreaterThan(0);
	});
});
