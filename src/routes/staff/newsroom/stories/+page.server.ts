import { desc, eq } from 'drizzle-orm';
import { requireRoles } from '$lib/server/auth/roles';
import { db } from '$lib/server/db';
import { STORY_STATUSES, stories, users, type StoryStatus } from '$lib/server/db/schema';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRoles(event, ...STAFF_AREAS.newsroom.roles);
	const asked = event.url.searchParams.get('status');
	const status = STORY_STATUSES.includes(asked as StoryStatus) ? (asked as StoryStatus) : null;
	const rows = await db()
		.select({
			id: stories.id,
			title: stories.title,
			kind: stories.kind,
			status: stories.status,
			publishAt: stories.publishAt,
			publishedAt: stories.publishedAt,
			updatedAt: stories.updatedAt,
			author: users.name
		})
		.from(stories)
		.leftJoin(users, eq(users.id, stories.authorId))
		.where(status ? eq(stories.status, status) : undefined)
		.orderBy(desc(stories.updatedAt))
		.limit(200);
	return { stories: rows, status, statuses: STORY_STATUSES };
};
