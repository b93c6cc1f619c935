// A local stand-in for the payment service, used whenever STRIPE_SECRET_KEY is not set (demo,
// development, tests). The app keeps using the official SDK with FAKE_SECRET_KEY; msw answers its
// calls to https://api.stripe.com in this process, fake pages under /fake-stripe play the hosted
// checkout and billing pages, and events are POSTed, signed, to the app's webhook endpoint.
import { resolve } from 'node:path';
import { setupServer } from 'msw/node';
import { FakeEngine } from './engine';
import { FAKE_SECRET_KEY, stripeHandlers } from './handlers';
import { currentFake, setCurrentFake, type FakeRuntime } from './runtime';
import { FakeStore, type QueueEntry } from './state';
import { WebhookDelivery, type AttemptResult } from './webhooks';

export { FAKE_SECRET_KEY };
export {
	advanceClock,
	availableBalance,
	cancelSubscription,
	checkoutView,
	closeDispute,
	createPayout,
	failNextPayout,
	fakeNow,
	keepSubscription,
	listEvents,
	openDispute,
	payCheckoutSession,
	portalView,
	redeliver,
	refund,
	TEST_CARDS,
	updateCard,
	type CardInput,
	type CheckoutView,
	type EventView,
	type PayResult,
	type PortalView,
	type Result
} from './engine';

/** Fake mode: no real key in the environment. */
export function fakeMode(): boolean {
	return !process.env.STRIPE_SECRET_KEY;
}

export interface FakeStripeOptions {
	/** Folder for `fake-stripe.json` (created if missing). */
	dataDir: string;
	/** The app's public origin, for the fake checkout and billing page URLs. */
	origin: string;
	/** Where events are POSTed, e.g. `${origin}/api/webhooks/stripe`. */
	webhookUrl: string;
	/** Deliver events by itself (default true); false leaves them for flushWebhooks(). */
	deliver?: boolean;
	/** First retry delay (default 1000 ms; doubles each time, at most 5 minutes). */
	retryBaseMs?: number;
	/** Attempts before an event is given up (default 20). */
	maxAttempts?: number;
}

export interface FakeStripe {
	readonly dataDir: string;
	readonly origin: string;
	readonly webhookUrl: string;
	/** The `whsec_…` secret the events are signed with (kept in the state file). */
	readonly webhookSecret: string;
	readonly engine: FakeEngine;
	/** Delivers what is queued; resolves when the queue is empty or only a failing event waits. */
	flushWebhooks(): Promise<void>;
	/** One delivery attempt for the oldest queued event, ignoring its backoff. */
	deliverNext(): Promise<AttemptResult | null>;
	setAutoDelivery(on: boolean): void;
	/** Events not yet delivered, oldest first. */
	pendingWebhooks(): QueueEntry[];
	stop(): Promise<void>;
}

function handle(runtime: FakeRuntime): FakeStripe {
	return {
		get dataDir() {
			return runtime.dataDir;
		},
		get origin() {
			return runtime.origin;
		},
		get webhookUrl() {
			return runtime.webhooks.url;
		},
		get webhookSecret() {
			return runtime.webhooks.secret;
		},
		engine: runtime.engine,
		flushWebhooks: () => runtime.webhooks.flush(),
		deliverNext: () => runtime.webhooks.deliverNext(),
		setAutoDelivery: (on) => runtime.webhooks.setAuto(on),
		pendingWebhooks: () => runtime.webhooks.pending(),
		stop: () => stopFakeStripe()
	};
}

/**
 * Starts the fake (or returns the one already running on the same folder, as after a `vite dev`
 * reload, with its origin and webhook URL updated).
 */
export async function startFakeStripe(options: FakeStripeOptions): Promise<FakeStripe> {
	const dataDir = resolve(options.dataDir);
	const origin = options.origin.replace(/\/+$/, '');
	const existing = currentFake();
	if (existing) {
		if (existing.dataDir !== dataDir) {
			throw new Error(
				`The local payment service already runs on ${existing.dataDir}; stop it before starting one on ${dataDir}.`
			);
		}
		existing.origin = origin;
		existing.webhooks.configure({ url: options.webhookUrl, auto: options.deliver ?? true });
		return handle(existing);
	}
	const store = FakeStore.open(dataDir);
	const webhooks = new WebhookDelivery(store, {
		url: options.webhookUrl,
		auto: false,
		...(options.retryBaseMs !== undefined ? { retryBaseMs: options.retryBaseMs } : {}),
		...(options.maxAttempts !== undefined ? { maxAttempts: options.maxAttempts } : {})
	});
	const runtime = { dataDir, origin, store, webhooks } as FakeRuntime;
	runtime.engine = new FakeEngine(store, {
		origin: () => runtime.origin,
		eventCreated: (eventId) => webhooks.enqueue(eventId)
	});
	runtime.server = setupServer(...stripeHandlers(runtime.engine, store));
	runtime.server.listen({ onUnhandledRequest: 'bypass' });
	setCurrentFake(runtime);
	runtime.engine.tick(); // what fell due while the app was stopped
	webhooks.setAuto(options.deliver ?? true);
	return handle(runtime);
}

export async function stopFakeStripe(): Promise<void> {
	const runtime = currentFake();
	if (!runtime) return;
	setCurrentFake(undefined);
	await runtime.webhooks.stop();
	runtime.server.close();
	runtime.store.save();
}

/** The running fake, or undefined. */
export function runningFakeStripe(): FakeStripe | undefined {
	const runtime = currentFake();
	return runtime ? handle(runtime) : undefined;
}

/** The secret the fake signs webhook events with. */
export function fakeWebhookSecret(): string {
	const runtime = currentFake();
	if (!runtime) {
		throw new Error(
			'The local test payment service is not running (startFakeStripe was not called).'
		);
	}
	return runtime.webhooks.secret;
}

/** Delivers queued events now (see FakeStripe.flushWebhooks). */
export function flushWebhooks(): Promise<void> {
	const runtime = currentFake();
	return runtime ? runtime.webhooks.flush() : Promise.resolve();
}
