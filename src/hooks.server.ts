import { building } from '$app/environment';
import type { Handle, HandleServerError, ServerInit } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { randomUUID } from 'node:crypto';
import { ensureFirstAdmin } from '$lib/server/auth/bootstrap';
import { readSession } from '$lib/server/auth/session';
import { closeDatabase, openDatabase } from '$lib/server/db';
import { DataDirLockedError } from '$lib/server/db/lock';
import { startMail, stopMail } from '$lib/server/mail/service';
import { fakeMode, startFakeStripe, stopFakeStripe } from '$lib/server/payments/fake';
import { startJourneyScheduler, stopJourneyScheduler } from '$lib/server/journeys/scheduler';
import { startStoryScheduler, stopStoryScheduler } from '$lib/server/newsroom/scheduler';
import { deliverDueGiftNotices } from '$lib/server/adoptions/gifts';
import { startLoop, stopLoop } from '$lib/server/loop';
import { fanOutPending } from '$lib/server/updates/fanout';
import { sameOriginForms } from '$lib/server/csrf';

export const init: ServerInit = async () => {
	if (building) return;
	try {
		await openDatabase();
	} catch (error) {
		if (error instanceof DataDirLockedError) {
			console.error(error.message);
			process.exit(1);
		}
		throw error;
	}
	const mail = await startMail();
	if (fakeMode()) {
		// No real payment key: the local test payment service answers the SDK instead.
		const { appOrigin } = await import('$lib/server/config');
		await startFakeStripe({
			dataDir: process.env.DATA_DIR ?? './data/tideward',
			origin: appOrigin(),
			webhookUrl: `${appOrigin()}/api/webhooks/stripe`
		});
	}
	startStoryScheduler();
	await ensureFirstAdmin();
	if (process.env.TIDEWARD_DEMO === '1') {
		const { ensureDemoData, printDemoBanner } = await import('$lib/server/demo');
		const state = await ensureDemoData();
		if (fakeMode()) {
			// A few adoptions paid through the test payment service (its events arrive once the
			// server listens).
			const { ensureDemoAdoptions } = await import('$lib/server/demo-adoptions');
			await ensureDemoAdoptions();
		}
		printDemoBanner(state, process.env.DATA_DIR ?? './data/tideward', mail.catcherPort);
	}
	startJourneyScheduler();
	// Gift notices wait for their delivery date (checked every 5 minutes by default).
	startLoop(
		'gift notices',
		() => deliverDueGiftNotices(),
		Number(process.env.GIFT_NOTICES_MS ?? 300_000),
		{
			runNow: true
		}
	);
	// Supporter updates: patient events fanned out to their adopters through the outbox.
	startLoop(
		'supporter updates',
		() => fanOutPending(),
		Number(process.env.SUPPORTER_UPDATES_MS ?? 30_000),
		{ runNow: true }
	);
	process.once('sveltekit:shutdown', () => {
		void Promise.allSettled([
			stopMail(),
			stopStoryScheduler(),
			stopJourneyScheduler(),
			stopLoop('gift notices'),
			stopLoop('supporter updates'),
			stopFakeStripe()
		]).finally(() => closeDatabase());
	});
};

const requestId: Handle = ({ event, resolve }) => {
	event.locals.requestId = event.request.headers.get('x-request-id') ?? randomUUID();
	return resolve(event);
};

const session: Handle = async ({ event, resolve }) => {
	const { user, session } = await readSession(event.cookies, event.url);
	event.locals.user = user;
	event.locals.session = session;
	return resolve(event);
};

const securityHeaders: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	response.headers.set('x-content-type-options', 'nosniff');
	response.headers.set('referrer-policy', 'strict-origin-when-cross-origin');
	response.headers.set('x-frame-options', 'DENY');
	return response;
};

export const handle = sequence(sameOriginForms, requestId, session, securityHeaders);

export const handleError: HandleServerError = ({ error, event, status }) => {
	if (status >= 500) console.error(`[${event.locals.requestId}]`, error);
	return {
		message: status >= 500 ? 'Something went wrong on our side. Please try again.' : 'Not found.'
	};
};
