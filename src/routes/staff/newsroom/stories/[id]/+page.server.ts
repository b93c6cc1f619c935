import { error, fail } from '@sveltejs/kit';
import { eq } from 'drizzle-orm';
import { z } from 'zod';
import { requireRoles } from '$lib/server/auth/roles';
import { db } from '$lib/server/db';
import { STORY_KINDS, stories, storyPatients, users } from '$lib/server/db/schema';
import { parseForm } from '$lib/server/forms';
import { storyForm } from '$lib/server/newsroom/story-form';
import { patientChoices } from '$lib/server/newsroom/story-pages';
import {
	availableStoryActions,
	STORY_ACTION_LABELS,
	storyEditable,
	type StoryAction
} from '$lib/server/newsroom/story-rules';
import {
	applyStoryAction,
	StoryRefused,
	storyReviewRequired,
	updateStory
} from '$lib/server/newsroom/stories';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { Actions, PageServerLoad } from './$types';

const area = STAFF_AREAS.newsroom.roles;

const workflowForm = z.object({
	action: z.enum(Object.keys(STORY_ACTION_LABELS) as [StoryAction, ...StoryAction[]], {
		error: 'Choose a step.'
	}),
	publishAt: z.string().optional(),
	// minutes east of UTC in the editor's browser, so "publish at" means their local time
	tzOffset: z.coerce.number().int().min(-900).max(900).optional()
});

export const load: PageServerLoad = async (event) => {
	const user = requireRoles(event, ...area);
	const [story] = await db()
		.select({
			id: stories.id,
			slug: stories.slug,
			title: stories.title,
			kind: stories.kind,
			summary: stories.summary,
			bodyMarkdown: stories.bodyMarkdown,
			bodyHtml: stories.bodyHtml,
			heroMediaId: stories.heroMediaId,
			status: stories.status,
			authorId: stories.authorId,
			publishAt: stories.publishAt,
			publishedAt: stories.publishedAt,
			approvedAt: stories.approvedAt,
			author: users.name
		})
		.from(stories)
		.leftJoin(users, eq(users.id, stories.authorId))
		.where(eq(stories.id, event.params.id));
	if (!story) error(404, 'No story here.');
	const [linked, patients, reviewRequired] = await Promise.all([
		db()
			.select({ patientId: storyPatients.patientId })
			.from(storyPatients)
			.where(eq(storyPatients.storyId, story.id)),
		patientChoices(),
		storyReviewRequired()
	]);
	const actions = availableStoryActions({
		status: story.status,
		authorId: story.authorId,
		actor: user,
		reviewRequired
	});
	return {
		story: { ...story, patientIds: linked.map((l) => l.patientId) },
		editable: storyEditable(story.status),
		actions: actions.map((a) => ({ action: a, label: STORY_ACTION_LABELS[a] })),
		reviewRequired,
		patients,
		kinds: STORY_KINDS,
		saved: event.url.searchParams.has('saved')
	};
};

export const actions: Actions = {
	save: async (event) => {
		const user = requireRoles(event, ...area);
		const parsed = parseForm(storyForm, await event.request.formData());
		if (!parsed.ok) return fail(400, { errors: parsed.errors, values: parsed.values });
		try {
			await updateStory(event.params.id, parsed.data, user);
		} catch (err) {
			if (err instanceof StoryRefused) return fail(400, { message: err.message });
			throw err;
		}
		return { done: 'Saved.' };
	},

	workflow: async (event) => {
		const user = requireRoles(event, ...area);
		const parsed = parseForm(workflowForm, await event.request.formData());
		if (!parsed.ok) return fail(400, { message: Object.values(parsed.errors)[0] });
		const { action, publishAt, tzOffset } = parsed.data;
		let when: Date | undefined;
		if (action === 'schedule') {
			const local = publishAt?.match(/^(\d{4})-(\d{2})-(\d{2})T(\d{2}):(\d{2})$/);
			if (!local) return fail(400, { message: 'Choose the date and time to publish.' });
			const [, y, mo, d, h, mi] = local.map(Number);
			when = new Date(Date.UTC(y, mo - 1, d, h, mi) - (tzOffset ?? 0) * 60_000);
		}
		try {
			await applyStoryAction(event.params.id, action, user, { publishAt: when });
		} catch (err) {
			if (err instanceof StoryRefused) return fail(400, { message: err.message });
			throw err;
		}
		return { done: `${STORY_ACTION_LABELS[action]}: done.` };
	}
};
