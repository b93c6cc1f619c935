// The running fake, kept on globalThis so that module reloads in `vite dev` find the same one.
import type { SetupServer } from 'msw/node';
import type { FakeEngine } from './engine';
import type { FakeStore } from './state';
import type { WebhookDelivery } from './webhooks';

export interface FakeRuntime {
	dataDir: string;
	origin: string;
	store: FakeStore;
	engine: FakeEngine;
	webhooks: WebhookDelivery;
	server: SetupServer;
}

const holder = globalThis as typeof globalThis & { __tidewardFakeStripe?: FakeRuntime };

export function currentFake(): FakeRuntime | undefined {
	return holder.__tidewardFakeStripe;
}

export function activeFake(): FakeRuntime {
	const runtime = holder.__tidewardFakeStripe;
	if (!runtime) {
		throw new Error(
			'The local test payment service is not running (startFakeStripe was not called).'
		);
	}
	return runtime;
}

export function setCurrentFake(runtime: FakeRuntime | undefined): void {
	holder.__tidewardFakeStripe = runtime;
}
