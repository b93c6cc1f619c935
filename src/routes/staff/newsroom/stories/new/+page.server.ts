import { fail, redirect } from '@sveltejs/kit';
import { requireRoles } from '$lib/server/auth/roles';
import { STORY_KINDS } from '$lib/server/db/schema';
import { parseForm } from '$lib/server/forms';
import { storyForm } from '$lib/server/newsroom/story-form';
import { patientChoices } from '$lib/server/newsroom/story-pages';
import { createStory, StoryRefused } from '$lib/server/newsroom/stories';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRoles(event, ...STAFF_AREAS.newsroom.roles);
	return { patients: await patientChoices(), kinds: STORY_KINDS };
};

export const actions: Actions = {
	default: async (event) => {
		const user = requireRoles(event, ...STAFF_AREAS.newsroom.roles);
		const parsed = parseForm(storyForm, await event.request.formData());
		if (!parsed.ok) return fail(400, { errors: parsed.errors, values: parsed.values });
		let id: string;
		try {
			id = await createStory(parsed.data, user);
		} catch (error) {
			if (error instanceof StoryRefused)
				return fail(400, { message: error.message, values: parsed.values });
			throw error;
		}
		redirect(303, `/staff/newsroom/stories/${id}?saved=1`);
	}
};
