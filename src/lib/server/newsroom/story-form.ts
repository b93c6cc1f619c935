import { z } from 'zod';
import { STORY_KINDS } from '../db/schema';

/** The story editor's form, shared by the new and edit pages. */
export const storyForm = z.object({
	title: z
		.string({ error: 'Give the story a title.' })
		.trim()
		.min(3, 'Give the story a title of at least 3 characters.')
		.max(140, 'Keep the title under 140 characters.'),
	kind: z.enum(STORY_KINDS, { error: 'Choose what kind of story this is.' }),
	summary: z
		.string()
		.trim()
		.max(300, 'Keep the summary under 300 characters.')
		.optional()
		.transform((v) => v ?? ''),
	bodyMarkdown: z
		.string()
		.max(50_000, 'Keep the story under 50,000 characters.')
		.optional()
		.transform((v) => v ?? ''),
	patientIds: z.preprocess(
		(v) => (v === undefined ? [] : Array.isArray(v) ? v : [v]),
		z.array(z.string().min(1)).max(20, 'Link at most 20 patients.')
	),
	heroMediaId: z
		.string()
		.trim()
		.optional()
		.transform((v) => v || null)
});
