// Webhook delivery from the fake: every event is POSTed to the app's endpoint with a
// `Stripe-Signature` header made by the SDK's reference signer, one at a time in creation order.
// A non-2xx answer or a network error is retried with exponential backoff (1 s, 2 s, 4 s …, at
// most 5 minutes apart); after 20 attempts (about an hour) the event is given up and marked failed,
// where the real service keeps trying for up to three days. Staff can send any event again. The
// queue lives in the state file, so events not yet delivered go out after a restart.
import Stripe from 'stripe';
import type { FakeStore, QueueEntry } from './state';

export interface WebhookOptions {
	url: string;
	/** Deliver by itself (default); off, events wait for flush() or deliverNext(). */
	auto?: boolean;
	retryBaseMs?: number;
	retryCapMs?: number;
	maxAttempts?: number;
	timeoutMs?: number;
}

export type AttemptResult = 'delivered' | 'retry' | 'gave_up';

export class WebhookDelivery {
	private readonly options: Required<WebhookOptions>;
	private chain: Promise<unknown> = Promise.resolve();
	private timer: NodeJS.Timeout | null = null;
	private timerAt = 0;
	private stopped = false;

	constructor(
		private readonly store: FakeStore,
		options: WebhookOptions
	) {
		this.options = {
			auto: true,
			retryBaseMs: 1000,
			retryCapMs: 5 * 60_000,
			maxAttempts: 20,
			timeoutMs: 10_000,
			...options
		};
	}

	get secret(): string {
		return this.store.state.webhookSecret;
	}

	get url(): string {
		return this.options.url;
	}

	private get queue(): QueueEntry[] {
		return this.store.state.webhookQueue;
	}

	configure(options: Partial<Pick<WebhookOptions, 'url' | 'auto'>>): void {
		if (options.url !== undefined) this.options.url = options.url;
		if (options.auto !== undefined) this.setAuto(options.auto);
	}

	setAuto(on: boolean): void {
		this.options.auto = on;
		if (on) this.schedule();
		else this.clearTimer();
	}

	/** Called by the engine for each new event (the engine saves the state afterwards). */
	enqueue(eventId: string): void {
		this.queue.push({ eventId, attempts: 0, nextAttemptAt: Date.now() });
		this.store.state.deliveries[eventId] = { status: 'pending', attempts: 0 };
		this.schedule();
	}

	redeliver(eventId: string): void {
		const event = this.store.get(eventId);
		if (!event || event.object !== 'event') throw new Error(`No such event: '${eventId}'`);
		if (!this.queue.some((e) => e.eventId === eventId)) {
			this.queue.push({ eventId, attempts: 0, nextAttemptAt: Date.now() });
		}
		const record = this.store.state.deliveries[eventId];
		this.store.state.deliveries[eventId] = { attempts: record?.attempts ?? 0, status: 'pending' };
		event.pending_webhooks = 1;
		this.store.save();
		this.schedule();
	}

	/** Events waiting for delivery, oldest first. */
	pending(): QueueEntry[] {
		return this.queue.map((e) => ({ ...e }));
	}

	/**
	 * Delivers what is queued now, in order, and resolves when the queue is empty or its first
	 * event is failing and waiting for its next retry.
	 */
	flush(): Promise<void> {
		return this.withLock(async () => {
			while (!this.stopped) {
				const head = this.queue[0];
				if (!head) return;
				if (head.attempts > 0 && head.nextAttemptAt > Date.now()) return;
				if ((await this.attempt(head)) === 'retry') return;
			}
		}).finally(() => this.schedule());
	}

	/** One attempt at the first queued event, whatever its backoff; null when the queue is empty. */
	deliverNext(): Promise<AttemptResult | null> {
		return this.withLock(async () => {
			const head = this.queue[0];
			return head ? this.attempt(head) : null;
		}).finally(() => this.schedule());
	}

	async stop(): Promise<void> {
		this.stopped = true;
		this.clearTimer();
		await this.chain;
	}

	private withLock<T>(run: () => Promise<T>): Promise<T> {
		const result = this.chain.then(run);
		this.chain = result.catch(() => undefined);
		return result;
	}

	private clearTimer() {
		if (this.timer) clearTimeout(this.timer);
		this.timer = null;
	}

	private schedule(): void {
		if (this.stopped || !this.options.auto) return;
		const head = this.queue[0];
		if (!head) return;
		const at = Math.max(Date.now(), head.nextAttemptAt);
		if (this.timer && this.timerAt <= at) return;
		this.clearTimer();
		this.timerAt = at;
		this.timer = setTimeout(() => {
			this.timer = null;
			void this.run();
		}, at - Date.now());
		this.timer.unref();
	}

	private run(): Promise<void> {
		return this.withLock(async () => {
			while (!this.stopped && this.options.auto) {
				const head = this.queue[0];
				if (!head || head.nextAttemptAt > Date.now()) return;
				if ((await this.attempt(head)) === 'retry') return;
			}
		}).finally(() => this.schedule());
	}

	private async attempt(entry: QueueEntry): Promise<AttemptResult> {
		const event = this.store.get(entry.eventId);
		const record = (this.store.state.deliveries[entry.eventId] ??= {
			status: 'pending',
			attempts: 0
		});
		if (!event) {
			this.remove(entry);
			this.store.save();
			return 'gave_up';
		}
		const payload = JSON.stringify(event, null, 2);
		const signature = Stripe.webhooks.generateTestHeaderString({ payload, secret: this.secret });
		entry.attempts += 1;
		record.attempts += 1;
		let delivered = false;
		try {
			const response = await fetch(this.options.url, {
				method: 'POST',
				headers: {
					'content-type': 'application/json; charset=utf-8',
					'stripe-signature': signature,
					'user-agent': 'Stripe/1.0 (+https://stripe.com/docs/webhooks)'
				},
				body: payload,
				redirect: 'manual',
				signal: AbortSignal.timeout(this.options.timeoutMs)
			});
			const body = await response.text().catch(() => '');
			record.lastStatus = response.status;
			delivered = response.status >= 200 && response.status < 300;
			record.lastError = delivered
				? undefined
				: `HTTP ${response.status} ${body.slice(0, 200)}`.trim();
		} catch (error) {
			const cause = (error as { cause?: { code?: string; message?: string } }).cause;
			record.lastStatus = undefined;
			record.lastError = `${(error as Error).message}${cause ? ` (${cause.code ?? cause.message})` : ''}`;
		}
		let result: AttemptResult;
		if (delivered) {
			this.remove(entry);
			record.status = 'delivered';
			record.deliveredAt = Date.now();
			event.pending_webhooks = 0;
			result = 'delivered';
		} else if (entry.attempts >= this.options.maxAttempts) {
			this.remove(entry);
			record.status = 'failed';
			event.pending_webhooks = 0;
			result = 'gave_up';
		} else {
			const delay = Math.min(
				this.options.retryCapMs,
				this.options.retryBaseMs * 2 ** (entry.attempts - 1)
			);
			entry.nextAttemptAt = Date.now() + delay;
			result = 'retry';
		}
		this.store.save();
		return result;
	}

	private remove(entry: QueueEntry) {
		const index = this.queue.indexOf(entry);
		if (index !== -1) this.queue.splice(index, 1);
	}
}
