import { and, asc, desc, eq, exists, inArray, lt, ne, sql } from 'drizzle-orm';
import { db, type Executor } from './db';
import { media, patients, stories, storyPatients, type Species, type StoryKind } from './db/schema';
import { mediaPhoto, qualified, type PublicPhoto } from './patients';

/**
 * The public reading of the Newsroom. A story is public only while its status is 'published';
 * drafts, stories in review, scheduled and archived ones never leave this module. Patients that
 * staff have hidden are never linked or named.
 */

/** What a visitor may know of a patient linked to a story. */
export const publicStoryPatientColumns = {
	slug: patients.slug,
	name: patients.name,
	species: patients.species
};
export interface PublicStoryPatient {
	slug: string;
	name: string;
	species: Species;
}

/** Story columns the public may read (never the markdown source, author or reviewer). */
export const publicStoryColumns = {
	id: stories.id,
	slug: stories.slug,
	title: stories.title,
	kind: stories.kind,
	summary: stories.summary,
	heroMediaId: stories.heroMediaId,
	publishedAt: stories.publishedAt
};

export interface PublishedStory {
	slug: string;
	title: string;
	kind: StoryKind;
	summary: string;
	publishedAt: Date;
	/** Updated on every save; feeds and the sitemap use it as the last change. */
	updatedAt: Date;
	hero: PublicPhoto | null;
	patients: PublicStoryPatient[];
}

export interface PublishedStoryWithBody extends PublishedStory {
	/** Sanitized by the Newsroom at every save: the only story markup a page may render. */
	bodyHtml: string;
}

export interface ListPublishedStoriesOptions {
	patientSlug?: string;
	kind?: StoryKind;
	limit?: number;
	/** Only stories published strictly before this moment (the next page of a list). */
	before?: Date;
}

const isPublished = eq(stories.status, 'published');

const storyOrder = [
	sql`${stories.publishedAt} desc nulls last`,
	desc(stories.createdAt),
	asc(stories.slug)
];

const storyId = qualified(stories, stories.id);
const heroMediaId = qualified(stories, stories.heroMediaId);

function linksPublicPatient(slug: string, executor: Executor) {
	return exists(
		executor
			.select({ one: sql`1` })
			.from(storyPatients)
			.innerJoin(patients, eq(patients.id, storyPatients.patientId))
			.where(
				and(
					sql`${storyPatients.storyId} = ${storyId}`,
					eq(patients.slug, slug),
					ne(patients.publicTreatment, 'hidden')
				)
			)
	);
}

async function patientsOf(
	storyIds: string[],
	executor: Executor
): Promise<Map<string, PublicStoryPatient[]>> {
	const byStory = new Map<string, PublicStoryPatient[]>();
	if (storyIds.length === 0) return byStory;
	const rows = await executor
		.select({ storyId: storyPatients.storyId, ...publicStoryPatientColumns })
		.from(storyPatients)
		.innerJoin(patients, eq(patients.id, storyPatients.patientId))
		.where(and(inArray(storyPatients.storyId, storyIds), ne(patients.publicTreatment, 'hidden')))
		.orderBy(asc(patients.name));
	for (const { storyId, ...patient } of rows) {
		const list = byStory.get(storyId) ?? [];
		list.push(patient);
		byStory.set(storyId, list);
	}
	return byStory;
}

type StoryRow = {
	id: string;
	slug: string;
	title: string;
	kind: StoryKind;
	summary: string;
	heroMediaId: string | null;
	heroAlt: string | null;
	heroWidth: number | null;
	publishedAt: Date | null;
	updatedAt: Date;
	createdAt: Date;
};

function toPublished(row: StoryRow, storyPatients: PublicStoryPatient[]): PublishedStory {
	return {
		slug: row.slug,
		title: row.title,
		kind: row.kind,
		summary: row.summary,
		// A published story always has the moment; the creation time stands in for legacy rows.
		publishedAt: row.publishedAt ?? row.createdAt,
		updatedAt: row.updatedAt,
		hero: row.heroMediaId
			? mediaPhoto(row.heroMediaId, row.heroAlt ?? '', row.heroWidth ?? undefined)
			: null,
		patients: storyPatients
	};
}

const rowColumns = {
	...publicStoryColumns,
	heroAlt: sql<string | null>`(select m.alt from ${media} m where m.id = ${heroMediaId})`,
	heroWidth: sql<number | null>`(select m.width from ${media} m where m.id = ${heroMediaId})`,
	updatedAt: stories.updatedAt,
	createdAt: stories.createdAt
};

function selectStories(options: ListPublishedStoriesOptions, executor: Executor, body: boolean) {
	const query = executor
		.select({ ...rowColumns, bodyHtml: body ? stories.bodyHtml : sql<string>`''` })
		.from(stories)
		.where(
			and(
				isPublished,
				options.kind ? eq(stories.kind, options.kind) : undefined,
				options.before ? lt(stories.publishedAt, options.before) : undefined,
				options.patientSlug !== undefined
					? linksPublicPatient(options.patientSlug, executor)
					: undefined
			)
		)
		.orderBy(...storyOrder);
	return options.limit === undefined ? query : query.limit(options.limit);
}

/** Published stories, newest first. */
export async function listPublishedStories(
	options: ListPublishedStoriesOptions = {},
	executor: Executor = db()
): Promise<PublishedStory[]> {
	const rows = await selectStories(options, executor, false);
	const linked = await patientsOf(
		rows.map((r) => r.id),
		executor
	);
	return rows.map((row) => toPublished(row, linked.get(row.id) ?? []));
}

/** Published stories with their sanitized bodies, newest first (for the feeds). */
export async function listPublishedStoriesWithBody(
	options: ListPublishedStoriesOptions = {},
	executor: Executor = db()
): Promise<PublishedStoryWithBody[]> {
	const rows = await selectStories(options, executor, true);
	const linked = await patientsOf(
		rows.map((r) => r.id),
		executor
	);
	return rows.map((row) => ({
		...toPublished(row, linked.get(row.id) ?? []),
		bodyHtml: row.bodyHtml
	}));
}

/** One published story with its sanitized body, or null (unknown, or not published). */
export async function getPublishedStory(
	slug: string,
	executor: Executor = db()
): Promise<PublishedStoryWithBody | null> {
	const [row] = await executor
		.select({ ...rowColumns, bodyHtml: stories.bodyHtml })
		.from(stories)
		.where(and(isPublished, eq(stories.slug, slug)));
	if (!row) return null;
	const linked = await patientsOf([row.id], executor);
	return { ...toPublished(row, linked.get(row.id) ?? []), bodyHtml: row.bodyHtml };
}
