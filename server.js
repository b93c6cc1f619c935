// The production server (`npm start`, `node server.js`, after `npm run build`): adapter-node's
// request handler (build/handler.js: static files, then SvelteKit) behind one step of our own —
// the public pages and APIs a signed-out visitor asks for within a few seconds of each other are
// answered from the app's store of public answers before SvelteKit's pipeline runs
// (src/lib/server/public-answers.ts; BENCHMARKS.md "Public HTTP" has the figures).
//
// Settings as adapter-node reads them (its own entry, build/index.js, still works but without
// that step): HOST, PORT, ORIGIN, BODY_SIZE_LIMIT, SHUTDOWN_TIMEOUT, KEEP_ALIVE_TIMEOUT,
// HEADERS_TIMEOUT; PROTOCOL_HEADER, HOST_HEADER and ADDRESS_HEADER behind a proxy.
import http from 'node:http';
import process from 'node:process';

/** @typedef {(req: http.IncomingMessage, res: http.ServerResponse, next: () => void) => unknown} Middleware */

// Loaded at run time: build/ exists only after `npm run build`. Importing it runs the app's
// start-up (the database, the workers), which also puts the answer step on globalThis.
const { handler } = /** @type {{ handler: Middleware }} */ (
	await import(new URL('./build/handler.js', import.meta.url).href)
);
const answerFromCache =
	/** @type {((req: http.IncomingMessage, res: http.ServerResponse) => boolean) | undefined} */ (
		/** @type {Record<symbol, unknown>} */ (globalThis)[Symbol.for('tideward.answerFromCache')]
	);

const host = process.env.HOST ?? '0.0.0.0';
const port = Number(process.env.PORT ?? 3000);
const shutdownSeconds = Number(process.env.SHUTDOWN_TIMEOUT ?? 30);

const server = http.createServer((req, res) => {
	try {
		if (answerFromCache?.(req, res)) return;
	} catch (error) {
		// The store is an optimisation: on any fault the app itself answers.
		console.error('public answer store:', error);
		if (res.headersSent) return void res.destroy();
	}
	void handler(req, res, () => {
		res.statusCode = 404;
		res.end('Not found');
	});
});
for (const [name, key] of /** @type {const} */ ([
	['KEEP_ALIVE_TIMEOUT', 'keepAliveTimeout'],
	['HEADERS_TIMEOUT', 'headersTimeout']
])) {
	const seconds = Number(process.env[name]);
	if (process.env[name] && Number.isFinite(seconds)) server[key] = seconds * 1000;
}

server.listen({ host, port }, () => {
	const address = server.address();
	console.log(
		`Listening on ${host}:${typeof address === 'object' && address ? address.port : port}`
	);
});

// As adapter-node's entry: stop taking connections, let the requests in flight finish (at most
// SHUTDOWN_TIMEOUT seconds), then tell the app (`sveltekit:shutdown`) to stop its workers and
// close the database.
/** @type {NodeJS.Timeout | undefined} */
let shutdownTimer;
/** @param {'SIGINT' | 'SIGTERM'} reason */
function shutdown(reason) {
	if (shutdownTimer) return;
	server.closeIdleConnections();
	server.close((error) => {
		if (error) return;
		clearTimeout(shutdownTimer);
		process.emit(/** @type {never} */ ('sveltekit:shutdown'), /** @type {never} */ (reason));
	});
	shutdownTimer = setTimeout(() => server.closeAllConnections(), shutdownSeconds * 1000);
}
server.on('request', (req) => {
	req.on('close', () => {
		if (shutdownTimer) server.closeIdleConnections();
	});
});
process.on('SIGTERM', shutdown);
process.on('SIGINT', shutdown);
