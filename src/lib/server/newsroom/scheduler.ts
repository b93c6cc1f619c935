import { startLoop, stopLoop } from '../loop';
import { clearPublicCache } from '../public-cache';
import { publishDueStories } from './stories';

// Publishing at the set time happens without anyone present: every instance runs this loop, and
// publishDueStories' conditional UPDATE makes sure each story is published once.
export function startStoryScheduler(intervalMs = Number(process.env.STORY_SCHEDULER_MS ?? 30_000)) {
	startLoop(
		'story scheduler',
		async () => {
			const published = await publishDueStories();
			if (published.length > 0) clearPublicCache();
		},
		intervalMs
	);
}

export const stopStoryScheduler = () => stopLoop('story scheduler');
