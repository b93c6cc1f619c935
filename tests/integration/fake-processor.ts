// The local fake processor for integration tests, with its signed events delivered over loopback
// HTTP to the real webhook handler (as SvelteKit would hand them over). One per test file.
import { createServer, type Server } from 'node:http';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { startFakeStripe, stopFakeStripe, type FakeStripe } from '$lib/server/payments/fake';
import { POST as webhook } from '../../src/routes/api/webhooks/stripe/+server';

export const TEST_ORIGIN = 'http://127.0.0.1:5173';

export interface TestProcessor {
	fake: FakeStripe;
	origin: string;
	webhookUrl: string;
	stop(): Promise<void>;
}

/** Hands a delivered request to the webhook handler and answers with its status. */
function startReceiver(): Promise<{ server: Server; url: string }> {
	const server = createServer(async (req, res) => {
		const chunks: Buffer[] = [];
		for await (const chunk of req) chunks.push(chunk as Buffer);
		const request = new Request(`http://127.0.0.1${req.url}`, {
			method: 'POST',
			headers: req.headers as Record<string, string>,
			body: Buffer.concat(chunks)
		});
		const response = await webhook({ request } as never);
		res.writeHead(response.status, { 'content-type': 'application/json' });
		res.end(await response.text());
	});
	return new Promise((resolve) =>
		server.listen(0, '127.0.0.1', () => {
			const address = server.address() as { port: number };
			resolve({ server, url: `http://127.0.0.1:${address.port}/api/webhooks/stripe` });
		})
	);
}

/**
 * Starts the fake (state in a fresh temporary folder) with events held until `fake.flushWebhooks()`
 * unless `deliver` is set, and sets ORIGIN for the links the app builds.
 */
export async function startTestProcessor(
	name: string,
	{ deliver = false }: { deliver?: boolean } = {}
): Promise<TestProcessor> {
	delete process.env.STRIPE_SECRET_KEY;
	const dataDir = mkdtempSync(join(tmpdir(), `tideward-${name}-`));
	const receiver = await startReceiver();
	process.env.ORIGIN = TEST_ORIGIN;
	const fake = await startFakeStripe({
		dataDir,
		origin: TEST_ORIGIN,
		webhookUrl: receiver.url,
		deliver,
		retryBaseMs: 10
	});
	return {
		fake,
		origin: TEST_ORIGIN,
		webhookUrl: receiver.url,
		async stop() {
			await stopFakeStripe();
			receiver.server.close();
			rmSync(dataDir, { recursive: true, force: true });
		}
	};
}

/** Posts a raw body to the webhook handler directly, with or without a signature. */
export function postWebhook(body: string, signature: string | null) {
	const headers: Record<string, string> = { 'content-type': 'application/json' };
	if (signature) headers['stripe-signature'] = signature;
	return webhook({
		request: new Request('http://127.0.0.1/api/webhooks/stripe', { method: 'POST', headers, body })
	} as never);
}
