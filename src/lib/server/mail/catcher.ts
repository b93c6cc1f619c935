import { simpleParser, type ParsedMail } from 'mailparser';
import type { AddressInfo } from 'node:net';
import { buffer } from 'node:stream/consumers';
import { SMTPServer, type SMTPServerSession } from 'smtp-server';
import { db as openDb, type Database, type Executor } from '../db';
import { caughtMail } from '../db/schema';
import { log } from '$lib/server/log';

/** Headers kept beside the parsed parts, for staff to check what a recipient would see. */
export const CAUGHT_HEADERS = [
	'from',
	'to',
	'cc',
	'reply-to',
	'date',
	'message-id',
	'subject',
	'list-unsubscribe',
	'list-unsubscribe-post',
	'list-id',
	'auto-submitted',
	'precedence'
] as const;

export interface CatcherOptions {
	/** 0 (the default) takes any free port; read the one it got from `Catcher.port`. */
	port?: number;
	/** The database to store into; defaults to the process's open database. */
	database?: () => Database;
}

export interface Catcher {
	readonly port: number;
	close(): Promise<void>;
}

export interface Envelope {
	from: string;
	to: string[];
}

export function catcherPortFromEnv(env: NodeJS.ProcessEnv = process.env): number {
	const port = Number(env.SMTP_CATCHER_PORT ?? 0);
	if (!Number.isInteger(port) || port < 0 || port > 65535) {
		throw new Error(`SMTP_CATCHER_PORT must be a port number, got "${env.SMTP_CATCHER_PORT}".`);
	}
	return port;
}

function selectedHeaders(parsed: ParsedMail): Record<string, string> {
	const headers: Record<string, string> = {};
	for (const { key, line } of parsed.headerLines) {
		if (!(CAUGHT_HEADERS as readonly string[]).includes(key) || key in headers) continue;
		const value = line
			.slice(line.indexOf(':') + 1)
			.replace(/\r?\n[ \t]+/g, ' ')
			.trim();
		headers[key] = value;
	}
	return headers;
}

/**
 * Stores one received message. A second copy with the same Message-ID (an outbox resend after
 * a crash between sending and recording it) is ignored. Returns false for such a copy.
 */
export async function storeCaughtMail(
	executor: Executor,
	raw: Buffer,
	envelope: Envelope
): Promise<boolean> {
	let parsed: ParsedMail | undefined;
	try {
		parsed = await simpleParser(raw, { skipTextToHtml: true });
	} catch (error) {
		// Keep what cannot be parsed: the raw source is still worth reading.
		log().error({ err: error }, 'mail catcher could not parse a message');
	}
	const rows = await executor
		.insert(caughtMail)
		.values({
			messageId: parsed?.messageId ?? null,
			envelopeFrom: envelope.from,
			envelopeTo: envelope.to,
			subject: parsed?.subject ?? '',
			html: parsed && typeof parsed.html === 'string' ? parsed.html : null,
			text: parsed?.text ?? null,
			headers: parsed ? selectedHeaders(parsed) : {},
			// PostgreSQL text cannot hold NUL.
			raw: raw.toString('utf8').replaceAll('\0', '')
		})
		.onConflictDoNothing({ target: caughtMail.messageId })
		.returning({ id: caughtMail.id });
	return rows.length > 0;
}

function envelopeOf(session: SMTPServerSession): Envelope {
	const { mailFrom, rcptTo } = session.envelope;
	return { from: mailFrom ? mailFrom.address : '', to: rcptTo.map((r) => r.address) };
}

function temporaryFailure(): Error & { responseCode: number } {
	return Object.assign(new Error('Mailbox storage is unavailable, try again later'), {
		responseCode: 451
	});
}

/** Starts the local SMTP server that catches all outgoing mail (development, demo, tests). */
export async function startCatcher(options: CatcherOptions = {}): Promise<Catcher> {
	const database = options.database ?? openDb;
	const server = new SMTPServer({
		logger: false,
		banner: 'Tideward mail catcher',
		authOptional: true,
		disabledCommands: ['AUTH', 'STARTTLS'],
		disableReverseLookup: true,
		size: 25 * 1024 * 1024,
		rejectOversized: true,
		closeTimeout: 2_000,
		onData(stream, session, callback) {
			buffer(stream)
				.then((raw) => storeCaughtMail(database(), raw, envelopeOf(session)))
				.then(
					() => callback(),
					(error: unknown) => {
						log().error({ err: error }, 'mail catcher could not store a message');
						callback(temporaryFailure());
					}
				);
		}
	});
	server.on('error', (error) => log().error({ err: error }, 'mail catcher failed'));

	await new Promise<void>((resolve, reject) => {
		server.server.once('error', reject);
		server.listen(options.port ?? 0, '127.0.0.1', () => {
			server.server.off('error', reject);
			resolve();
		});
	});
	const { port } = server.server.address() as AddressInfo;

	return {
		port,
		close: () => new Promise<void>((resolve) => server.close(() => resolve()))
	};
}
