// Fake request events for calling public +server.ts handlers and +page.server.ts loads directly.

export function publicEvent(
	path: string,
	params: Record<string, string> = {},
	headers: Record<string, string> = {}
) {
	const url = new URL(`http://localhost${path}`);
	return {
		request: new Request(url, { headers }),
		url,
		params,
		locals: { user: null, session: null, requestId: 'test' },
		route: { id: null },
		cookies: { get: () => undefined, getAll: () => [], set: () => {}, delete: () => {} },
		setHeaders: () => {},
		getClientAddress: () => '127.0.0.1',
		parent: async () => ({}),
		depends: () => {},
		untrack: <T>(fn: () => T) => fn(),
		isDataRequest: false,
		isSubRequest: false
	} as never;
}

/** The error a load threw with `error(status, …)`, or null when it returned normally. */
export async function loadStatus(run: () => unknown): Promise<number | null> {
	try {
		await run();
		return null;
	} catch (error) {
		if (error && typeof error === 'object' && 'status' in error) return Number(error.status);
		throw error;
	}
}
