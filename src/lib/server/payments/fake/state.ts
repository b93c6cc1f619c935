// Everything the local payment fake knows, in one JSON file that a single process owns. Written
// whole after each change (temporary file, then rename), read back at start, so a restart of the
// app finds the same sessions, charges, payouts and undelivered webhook events.
import { randomBytes } from 'node:crypto';
import {
	closeSync,
	existsSync,
	fsyncSync,
	mkdirSync,
	openSync,
	readFileSync,
	renameSync,
	writeSync
} from 'node:fs';
import { join } from 'node:path';

/** An API object as the fake returns it; the field set follows the SDK's types (objects.ts). */
export interface ApiObject {
	id: string;
	object: string;
	[key: string]: unknown;
}

/** What a test card does after it has been accepted (see engine.ts, TEST_CARDS). */
export type CardBehaviour = 'succeeds' | 'renewals_fail' | 'disputed';

/** What a checkout session was created with that is not part of its API object. */
export interface SessionExtras {
	lineItems: ApiObject[];
	paymentIntentData: { metadata: Record<string, string>; description: string | null };
	subscriptionData: { metadata: Record<string, string>; description: string | null };
	customerCreation: 'always' | 'if_required';
}

export interface IdempotencyRecord {
	method: string;
	path: string;
	params: string;
	status: number;
	body: unknown;
	/** Wall-clock milliseconds; records are kept for 24 hours, as the real API does. */
	storedAt: number;
}

export interface QueueEntry {
	eventId: string;
	attempts: number;
	/** Wall-clock milliseconds of the next try. */
	nextAttemptAt: number;
}

export interface DeliveryRecord {
	status: 'pending' | 'delivered' | 'failed';
	attempts: number;
	lastStatus?: number;
	lastError?: string;
	deliveredAt?: number;
}

export interface FakeState {
	version: 1;
	webhookSecret: string;
	/** Seconds added to the wall clock (staff "advance the clock"). */
	clockOffsetSeconds: number;
	seq: number;
	objects: Record<string, ApiObject>;
	/** Creation order of every object, for lists (newest first) and event delivery. */
	order: Record<string, number>;
	sessions: Record<string, SessionExtras>;
	/** By payment method id. */
	cards: Record<string, CardBehaviour>;
	/** By automatic payout id: the balance transactions it paid out, its own included. */
	payoutContents: Record<string, string[]>;
	/** By balance transaction id: the automatic payout that swept it. */
	sweptBy: Record<string, string>;
	failNextPayout: boolean;
	idempotency: Record<string, IdempotencyRecord>;
	webhookQueue: QueueEntry[];
	deliveries: Record<string, DeliveryRecord>;
}

const ALPHABET = '0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz';

export function randomToken(length: number): string {
	const bytes = randomBytes(length);
	let out = '';
	for (let i = 0; i < length; i++) out += ALPHABET[bytes[i] % ALPHABET.length];
	return out;
}

const IDEMPOTENCY_TTL_MS = 24 * 3600 * 1000;

function emptyState(): FakeState {
	return {
		version: 1,
		webhookSecret: `whsec_${randomToken(32)}`,
		clockOffsetSeconds: 0,
		seq: 0,
		objects: {},
		order: {},
		sessions: {},
		cards: {},
		payoutContents: {},
		sweptBy: {},
		failNextPayout: false,
		idempotency: {},
		webhookQueue: [],
		deliveries: {}
	};
}

export class FakeStore {
	private constructor(
		readonly file: string,
		readonly state: FakeState
	) {}

	/** Opens (or creates) `${dataDir}/fake-stripe.json`. */
	static open(dataDir: string): FakeStore {
		mkdirSync(dataDir, { recursive: true });
		const file = join(dataDir, 'fake-stripe.json');
		let state: FakeState;
		if (existsSync(file)) {
			try {
				state = JSON.parse(readFileSync(file, 'utf8')) as FakeState;
			} catch (error) {
				throw new Error(
					`The local payment service's state file ${file} cannot be read (${(error as Error).message}). Move it away to start with an empty one.`,
					{ cause: error }
				);
			}
			if (state.version !== 1) {
				throw new Error(
					`The state file ${file} has an unknown version (${String(state.version)}).`
				);
			}
		} else {
			state = emptyState();
		}
		const store = new FakeStore(file, state);
		store.pruneIdempotency();
		store.save();
		return store;
	}

	save(): void {
		const temp = `${this.file}.${process.pid}.tmp`;
		const fd = openSync(temp, 'w');
		try {
			writeSync(fd, JSON.stringify(this.state));
			fsyncSync(fd);
		} finally {
			closeSync(fd);
		}
		renameSync(temp, this.file);
	}

	/** The fake's clock in unix seconds: the wall clock plus the offset staff have added. */
	now(): number {
		return Math.floor(Date.now() / 1000) + this.state.clockOffsetSeconds;
	}

	newId(prefix: string, length = 24): string {
		let id: string;
		do id = `${prefix}${randomToken(length)}`;
		while (this.state.objects[id]);
		return id;
	}

	put<T extends ApiObject>(object: T): T {
		if (!(object.id in this.state.order)) this.state.order[object.id] = ++this.state.seq;
		this.state.objects[object.id] = object;
		return object;
	}

	get<T extends ApiObject = ApiObject>(id: string): T | undefined {
		return this.state.objects[id] as T | undefined;
	}

	/** Objects of one type, newest first (as the API lists them). */
	all<T extends ApiObject = ApiObject>(type: string): T[] {
		return Object.values(this.state.objects)
			.filter((o) => o.object === type)
			.sort((a, b) => this.state.order[b.id] - this.state.order[a.id]) as T[];
	}

	seqOf(id: string): number {
		return this.state.order[id] ?? 0;
	}

	pruneIdempotency(): void {
		const cutoff = Date.now() - IDEMPOTENCY_TTL_MS;
		for (const [key, record] of Object.entries(this.state.idempotency)) {
			if (record.storedAt < cutoff) delete this.state.idempotency[key];
		}
	}
}
