import { and, eq, inArray, like, lte, or, sql } from 'drizzle-orm';
import { randomUUID } from 'node:crypto';
import { slugify, uniqueSlug } from '../../slug';
import { audit } from '../audit';
import { db, type Executor } from '../db';
import {
	media,
	organisationSettings,
	patientEvents,
	patients,
	stories,
	storyPatients,
	type StoryKind
} from '../db/schema';
import { renderMarkdown } from './markdown';
import {
	refuseStoryAction,
	storyEditable,
	targetStatus,
	type StoryAction,
	type StoryActor
} from './story-rules';

export class StoryRefused extends Error {}

export interface StoryInput {
	title: string;
	kind: StoryKind;
	summary: string;
	bodyMarkdown: string;
	patientIds: string[];
	heroMediaId: string | null;
}

async function freeSlug(tx: Executor, title: string, ownId?: string): Promise<string> {
	const base = slugify(title);
	const rows = await tx
		.select({ slug: stories.slug, id: stories.id })
		.from(stories)
		.where(or(eq(stories.slug, base), like(stories.slug, `${base}-%`)));
	return uniqueSlug(base, new Set(rows.filter((r) => r.id !== ownId).map((r) => r.slug)));
}

async function linkPatients(tx: Executor, storyId: string, patientIds: string[]): Promise<void> {
	await tx.delete(storyPatients).where(eq(storyPatients.storyId, storyId));
	if (patientIds.length === 0) return;
	const known = await tx
		.select({ id: patients.id })
		.from(patients)
		.where(inArray(patients.id, patientIds));
	if (known.length !== new Set(patientIds).size) {
		throw new StoryRefused('One of the chosen patients does not exist any more.');
	}
	await tx.insert(storyPatients).values(known.map((p) => ({ storyId, patientId: p.id })));
}

/** The hero photo must be in the photo library; an unknown id would fail the foreign key (a 500). */
async function checkHeroMedia(tx: Executor, mediaId: string | null): Promise<void> {
	if (mediaId === null) return;
	const [found] = await tx.select({ id: media.id }).from(media).where(eq(media.id, mediaId));
	if (!found)
		throw new StoryRefused('The chosen photo is not in the photo library; upload it again.');
}

export async function createStory(input: StoryInput, actor: StoryActor): Promise<string> {
	return db().transaction(async (tx) => {
		await checkHeroMedia(tx, input.heroMediaId);
		const id = randomUUID();
		await tx.insert(stories).values({
			id,
			slug: await freeSlug(tx, input.title),
			title: input.title,
			kind: input.kind,
			summary: input.summary,
			bodyMarkdown: input.bodyMarkdown,
			bodyHtml: renderMarkdown(input.bodyMarkdown),
			heroMediaId: input.heroMediaId,
			authorId: actor.id
		});
		await linkPatients(tx, id, input.patientIds);
		await audit(tx, actor.id, 'story.created', id, { title: input.title });
		return id;
	});
}

export async function updateStory(id: string, input: StoryInput, actor: StoryActor): Promise<void> {
	await db().transaction(async (tx) => {
		const [story] = await tx.select().from(stories).where(eq(stories.id, id)).for('update');
		if (!story) throw new StoryRefused('This story does not exist.');
		if (!storyEditable(story.status)) {
			throw new StoryRefused(
				story.status === 'scheduled'
					? 'This story is scheduled: unschedule it before editing.'
					: 'Archived stories cannot be edited: publish it again first.'
			);
		}
		await checkHeroMedia(tx, input.heroMediaId);
		await tx
			.update(stories)
			.set({
				// The address of a published story stays stable even when its title is corrected.
				slug: story.status === 'published' ? story.slug : await freeSlug(tx, input.title, id),
				title: input.title,
				kind: input.kind,
				summary: input.summary,
				bodyMarkdown: input.bodyMarkdown,
				bodyHtml: renderMarkdown(input.bodyMarkdown),
				heroMediaId: input.heroMediaId,
				updatedAt: new Date()
			})
			.where(eq(stories.id, id));
		await linkPatients(tx, id, input.patientIds);
		await audit(tx, actor.id, 'story.edited', id, { status: story.status });
	});
}

/**
 * Records that a story about these patients is out, once per (story, patient): the
 * supporter-updates work turns the events into field notes. Patients who died or whose page is
 * hidden get no automatic update; their adopters hear from staff personally.
 */
async function recordPublication(tx: Executor, storyIds: string[]): Promise<void> {
	if (storyIds.length === 0) return;
	const linked = await tx
		.select({
			storyId: stories.id,
			slug: stories.slug,
			title: stories.title,
			kind: stories.kind,
			patientId: patients.id
		})
		.from(storyPatients)
		.innerJoin(stories, eq(stories.id, storyPatients.storyId))
		.innerJoin(patients, eq(patients.id, storyPatients.patientId))
		.where(
			and(
				inArray(storyPatients.storyId, storyIds),
				sql`${patients.status} <> 'died'`,
				eq(patients.publicTreatment, 'shown')
			)
		);
	if (linked.length === 0) return;
	await tx
		.insert(patientEvents)
		.values(
			linked.map((l) => ({
				patientId: l.patientId,
				kind: 'story_published' as const,
				dedupeKey: `story_published:${l.storyId}:${l.patientId}`,
				payload: { storyId: l.storyId, slug: l.slug, title: l.title, kind: l.kind }
			}))
		)
		.onConflictDoNothing({ target: patientEvents.dedupeKey });
}

export async function storyReviewRequired(tx: Executor = db()): Promise<boolean> {
	const [row] = await tx
		.select({ required: organisationSettings.storyReviewRequired })
		.from(organisationSettings)
		.where(eq(organisationSettings.id, 1));
	return row?.required ?? true;
}

/** Moves a story along its workflow, or throws StoryRefused with the reason. */
export async function applyStoryAction(
	id: string,
	action: StoryAction,
	actor: StoryActor,
	options: { publishAt?: Date; now?: Date } = {}
): Promise<void> {
	const now = options.now ?? new Date();
	await db().transaction(async (tx) => {
		const [story] = await tx.select().from(stories).where(eq(stories.id, id)).for('update');
		if (!story) throw new StoryRefused('This story does not exist.');
		const refusal = refuseStoryAction(action, {
			status: story.status,
			authorId: story.authorId,
			actor,
			reviewRequired: await storyReviewRequired(tx)
		});
		if (refusal) throw new StoryRefused(refusal);
		if (action === 'schedule' && (!options.publishAt || options.publishAt <= now)) {
			throw new StoryRefused('Choose a publication time in the future.');
		}
		if (
			(action === 'publish_now' || action === 'schedule' || action === 'submit') &&
			!story.bodyMarkdown.trim()
		) {
			throw new StoryRefused('Write the story before it goes further.');
		}
		const approving = action === 'publish_now' || action === 'schedule';
		const publishing = action === 'publish_now' || action === 'restore';
		await tx
			.update(stories)
			.set({
				status: targetStatus(action),
				...(approving ? { approvedBy: actor.id, approvedAt: now } : {}),
				...(action === 'schedule' ? { publishAt: options.publishAt } : {}),
				...(action === 'unschedule' || action === 'send_back'
					? { publishAt: null, approvedBy: null, approvedAt: null }
					: {}),
				...(publishing ? { publishedAt: story.publishedAt ?? now, publishAt: null } : {}),
				updatedAt: now
			})
			.where(eq(stories.id, id));
		if (publishing) await recordPublication(tx, [id]);
		await audit(tx, actor.id, `story.${action}`, id, {
			from: story.status,
			to: targetStatus(action),
			...(options.publishAt ? { publishAt: options.publishAt.toISOString() } : {})
		});
	});
}

/**
 * Publishes every scheduled story whose time has come. One conditional UPDATE claims them, so
 * when several instances run this at once each story is published exactly once.
 */
export async function publishDueStories(now = new Date()): Promise<string[]> {
	return db().transaction(async (tx) => {
		const published = await tx
			.update(stories)
			.set({ status: 'published', publishedAt: sql`${stories.publishAt}`, updatedAt: now })
			.where(and(eq(stories.status, 'scheduled'), lte(stories.publishAt, now)))
			.returning({ id: stories.id });
		const ids = published.map((p) => p.id);
		await recordPublication(tx, ids);
		for (const id of ids) await audit(tx, null, 'story.published_on_schedule', id);
		return ids;
	});
}
