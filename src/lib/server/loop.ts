import { log, taskId, withRequestId } from './log';

// Background work that runs without anyone present (publishing stories, moving the public cutoff,
// delivering gift notices). Every instance runs its own loop; the tasks themselves make each
// change once through conditional updates and row locks, so several instances can run at once.

interface Loop {
	timer: NodeJS.Timeout;
	running: Promise<unknown> | null;
}

const holder = globalThis as typeof globalThis & { __tidewardLoops?: Map<string, Loop> };
const loops = () => (holder.__tidewardLoops ??= new Map());

/**
 * Runs `task` every `intervalMs` (never two runs of one loop at once), unless the loop already
 * runs or `<NAME>=off` is set in the environment. With `runNow` the first run starts at once.
 */
export function startLoop(
	name: string,
	task: () => Promise<unknown>,
	intervalMs: number,
	{ runNow = false }: { runNow?: boolean } = {}
): void {
	const envName = name.toUpperCase().replace(/[^A-Z0-9]+/g, '_');
	if (loops().has(name) || process.env[envName] === 'off') return;
	const tick = () => {
		if (loop.running) return;
		// Each run's log lines share an id, as a request's do.
		loop.running = withRequestId(taskId(name.replace(/\W+/g, '-')), task)
			.catch((error) => log().error({ err: error, task: name }, 'task failed'))
			.finally(() => (loop.running = null));
	};
	const loop: Loop = { timer: setInterval(tick, intervalMs), running: null };
	loop.timer.unref();
	loops().set(name, loop);
	if (runNow) tick();
}

/** Stops a loop and waits for a run in progress to finish. */
export async function stopLoop(name: string): Promise<void> {
	const loop = loops().get(name);
	if (!loop) return;
	loops().delete(name);
	clearInterval(loop.timer);
	await loop.running;
}
