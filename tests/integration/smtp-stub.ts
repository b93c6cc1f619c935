import type { AddressInfo } from 'node:net';
import { buffer } from 'node:stream/consumers';
import { SMTPServer } from 'smtp-server';

export interface StubReply {
	code: number;
	message: string;
}

export interface SmtpStub {
	port: number;
	/** Message-IDs of the messages accepted, in order, repeats included. */
	delivered: string[];
	/** Replace what the stub answers to RCPT TO or DATA (undefined = accept). */
	replies: { rcpt?: StubReply; data?: StubReply };
	close(): Promise<void>;
}

function rejection(reply: StubReply): Error {
	return Object.assign(new Error(reply.message), { responseCode: reply.code });
}

/** A throwaway SMTP server on 127.0.0.1 that counts deliveries or refuses them on request. */
export async function startSmtpStub(): Promise<SmtpStub> {
	const delivered: string[] = [];
	const replies: SmtpStub['replies'] = {};
	const server = new SMTPServer({
		logger: false,
		authOptional: true,
		disabledCommands: ['AUTH', 'STARTTLS'],
		disableReverseLookup: true,
		closeTimeout: 500,
		onRcptTo(_address, _session, callback) {
			callback(replies.rcpt ? rejection(replies.rcpt) : null);
		},
		onData(stream, _session, callback) {
			buffer(stream).then((raw) => {
				if (replies.data) return callback(rejection(replies.data));
				const id = /^message-id:\s*(\S+)/im.exec(raw.toString('utf8'))?.[1] ?? '';
				delivered.push(id);
				callback();
			}, callback);
		}
	});
	await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
	return {
		port: (server.server.address() as AddressInfo).port,
		delivered,
		replies,
		close: () => new Promise<void>((resolve) => server.close(() => resolve()))
	};
}
