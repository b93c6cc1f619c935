import { eq } from 'drizzle-orm';
import { describe, expect, it } from 'vitest';
import { auditLog, patientEvents, patients, stories, users } from '$lib/server/db/schema';
import {
	applyStoryAction,
	createStory,
	publishDueStories,
	StoryRefused,
	updateStory,
	type StoryInput
} from '$lib/server/newsroom/stories';
import type { StoryActor } from '$lib/server/newsroom/story-rules';
import { useTestDatabase } from '../setup/test-db';

const db = useTestDatabase();

async function person(id: string, roles: StoryActor['roles']): Promise<StoryActor> {
	await db()
		.insert(users)
		.values({ id, email: `${id}@example.test`, name: id })
		.onConflictDoNothing();
	return { id, roles };
}

async function patient(id: string, extra: Partial<typeof patients.$inferInsert> = {}) {
	await db()
		.insert(patients)
		.values({
			id,
			slug: id,
			name: id,
			species: 'green',
			lifeStage: 'juvenile',
			admittedOn: '2026-01-05',
			admissionReason: 'boat_strike',
			status: 'in_rehabilitation',
			...extra
		});
	return id;
}

function input(over: Partial<StoryInput> = {}): StoryInput {
	return {
		title: 'First swim in the big pool',
		kind: 'progress',
		summary: 'A good week.',
		bodyMarkdown: 'She **dove** twice. <script>alert(1)</script>',
		patientIds: [],
		heroMediaId: null,
		...over
	};
}

describe('stories', () => {
	it('saves the markdown with cleaned HTML and a unique slug', async () => {
		const author = await person('author', ['educator']);
		const a = await createStory(input(), author);
		const b = await createStory(input(), author);
		const rows = await db().select().from(stories);
		const first = rows.find((r) => r.id === a)!;
		expect(first.bodyHtml).toBe('<p>She <strong>dove</strong> twice. </p>\n');
		expect(first.status).toBe('draft');
		expect(rows.find((r) => r.id === b)!.slug).toBe('first-swim-in-the-big-pool-2');
	});

	it('goes draft → review → scheduled → published with a second person approving', async () => {
		const author = await person('writer', ['educator']);
		const editor = await person('editor', ['educator']);
		const pid = await patient('tortuga');
		const id = await createStory(input({ title: 'Tortuga eats again', patientIds: [pid] }), author);
		await applyStoryAction(id, 'submit', author);
		await expect(applyStoryAction(id, 'publish_now', author)).rejects.toThrow(
			'Someone other than the author must approve this story.'
		);
		const now = new Date('2026-12-01T10:00:00Z');
		await expect(
			applyStoryAction(id, 'schedule', editor, { publishAt: new Date('2026-12-01T09:00:00Z'), now })
		).rejects.toThrow('Choose a publication time in the future.');
		const at = new Date('2026-12-01T12:00:00Z');
		await applyStoryAction(id, 'schedule', editor, { publishAt: at, now });
		await expect(updateStory(id, input(), author)).rejects.toThrow(/unschedule it before editing/);

		expect(await publishDueStories(new Date('2026-12-01T11:59:59Z'))).toEqual([]);
		const [first, second] = await Promise.all([
			publishDueStories(new Date('2026-12-01T12:00:01Z')),
			publishDueStories(new Date('2026-12-01T12:00:01Z'))
		]);
		expect([...first, ...second]).toEqual([id]);
		const [story] = await db().select().from(stories).where(eq(stories.id, id));
		expect(story).toMatchObject({ status: 'published', approvedBy: 'editor', publishedAt: at });
		const events = await db().select().from(patientEvents).where(eq(patientEvents.patientId, pid));
		expect(events).toEqual([
			expect.objectContaining({
				kind: 'story_published',
				dedupeKey: `story_published:${id}:${pid}`,
				payload: expect.objectContaining({ slug: story.slug, title: 'Tortuga eats again' })
			})
		]);

		await applyStoryAction(id, 'archive', editor);
		await applyStoryAction(id, 'restore', editor);
		expect(
			await db().select().from(patientEvents).where(eq(patientEvents.patientId, pid))
		).toHaveLength(1);
		const trail = await db().select().from(auditLog).where(eq(auditLog.subject, id));
		expect(trail.map((t) => t.action)).toEqual(
			expect.arrayContaining([
				'story.submit',
				'story.schedule',
				'story.published_on_schedule',
				'story.archive'
			])
		);
	});

	it('a refused step changes nothing', async () => {
		const author = await person('solo', ['educator']);
		const id = await createStory(input({ title: 'Quiet week' }), author);
		const before = await db().select().from(stories).where(eq(stories.id, id));
		await expect(applyStoryAction(id, 'archive', author)).rejects.toBeInstanceOf(StoryRefused);
		await expect(
			applyStoryAction(id, 'publish_now', await person('tracker-only', ['tracker']))
		).rejects.toThrow('Only education staff and administrators work on stories.');
		expect(await db().select().from(stories).where(eq(stories.id, id))).toEqual(before);
	});

	it('no automatic update for a patient who died or whose page is hidden', async () => {
		const author = await person('w2', ['educator']);
		const editor = await person('e2', ['admin']);
		const gone = await patient('estrella', { status: 'died', publicTreatment: 'memorial' });
		const hidden = await patient('sombra', { publicTreatment: 'hidden' });
		const shown = await patient('brisa');
		const id = await createStory(
			input({ title: 'Remembering a friend', patientIds: [gone, hidden, shown] }),
			author
		);
		await applyStoryAction(id, 'submit', author);
		await applyStoryAction(id, 'publish_now', editor);
		const events = await db().select().from(patientEvents);
		const forStory = events.filter((e) => e.dedupeKey.startsWith(`story_published:${id}`));
		expect(forStory.map((e) => e.patientId)).toEqual([shown]);
	});
});
