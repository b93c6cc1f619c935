import { catcherPortFromEnv, startCatcher, type Catcher } from './catcher';
import {
	createMailTransport,
	smtpUrlFromEnv,
	useMailTransport,
	type MailTransport
} from './transport';
import { startOutboxWorker, stopOutboxWorker } from './worker';

export type MailMode = 'smtp' | 'catcher';

interface MailState {
	mode: MailMode;
	transport: MailTransport;
	catcher?: Catcher;
}

// On globalThis so `vite dev` reloading this module does not start a second catcher and loop.
const holder = globalThis as typeof globalThis & { __tidewardMail?: Promise<MailState> };

async function start(): Promise<MailState> {
	const url = smtpUrlFromEnv();
	let catcher: Catcher | undefined;
	let transport: MailTransport;
	if (url) {
		transport = createMailTransport({ url });
	} else {
		catcher = await startCatcher({ port: catcherPortFromEnv() });
		transport = createMailTransport({ port: catcher.port });
	}
	useMailTransport(transport);
	startOutboxWorker();
	return { mode: url ? 'smtp' : 'catcher', transport, catcher };
}

/**
 * Starts sending: the local catcher when SMTP_URL is unset, the transport, and the outbox
 * loop (unless MAIL_WORKER=off). Needs the database open. A second call returns the same state.
 */
export async function startMail(): Promise<{ mode: MailMode; catcherPort?: number }> {
	holder.__tidewardMail ??= start();
	try {
		const state = await holder.__tidewardMail;
		return { mode: state.mode, catcherPort: state.catcher?.port };
	} catch (error) {
		holder.__tidewardMail = undefined;
		throw error;
	}
}

/** How mail leaves this instance, or undefined before `startMail()`. */
export async function mailMode(): Promise<MailMode | undefined> {
	const pending = holder.__tidewardMail;
	if (!pending) return undefined;
	try {
		return (await pending).mode;
	} catch {
		return undefined;
	}
}

/** Stops the loop (after its current batch), then the transport and the catcher. */
export async function stopMail(): Promise<void> {
	const pending = holder.__tidewardMail;
	holder.__tidewardMail = undefined;
	await stopOutboxWorker();
	if (!pending) return;
	const state = await pending.catch(() => undefined);
	if (!state) return;
	useMailTransport(undefined);
	state.transport.close();
	await state.catcher?.close();
}
