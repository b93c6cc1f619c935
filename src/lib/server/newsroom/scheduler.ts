import { publishDueStories } from './stories';

// Publishing at the set time happens without anyone present: every instance runs this loop, and
// publishDueStories' conditional UPDATE makes sure each story is published once.
const holder = globalThis as typeof globalThis & {
	__tidewardStoryScheduler?: { timer: NodeJS.Timeout; running: Promise<unknown> | null };
};

export function startStoryScheduler(intervalMs = Number(process.env.STORY_SCHEDULER_MS ?? 30_000)) {
	if (holder.__tidewardStoryScheduler || process.env.STORY_SCHEDULER === 'off') return;
	const state: { timer: NodeJS.Timeout; running: Promise<unknown> | null } = {
		timer: setInterval(() => {
			if (state.running) return;
			state.running = publishDueStories()
				.catch((error) => console.error('Publishing scheduled stories failed:', error))
				.finally(() => (state.running = null));
		}, intervalMs),
		running: null
	};
	state.timer.unref();
	holder.__tidewardStoryScheduler = state;
}

export async function stopStoryScheduler(): Promise<void> {
	const state = holder.__tidewardStoryScheduler;
	if (!state) return;
	holder.__tidewardStoryScheduler = undefined;
	clearInterval(state.timer);
	await state.running;
}
