import { building } from '$app/environment';
import type { Handle, HandleServerError, ServerInit } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { ensureFirstAdmin } from '$lib/server/auth/bootstrap';
import { readSession } from '$lib/server/auth/session';
import { closeDatabase, openDatabase } from '$lib/server/db';
import { DataDirLockedError } from '$lib/server/db/lock';
import { checkEnvironment } from '$lib/server/env';
import { startMail, stopMail } from '$lib/server/mail/service';
import { fakeMode, startFakeStripe, stopFakeStripe } from '$lib/server/payments/fake';
import { startJourneyScheduler, stopJourneyScheduler } from '$lib/server/journeys/scheduler';
import { startStoryScheduler, stopStoryScheduler } from '$lib/server/newsroom/scheduler';
import { deliverDueGiftNotices } from '$lib/server/adoptions/gifts';
import { startLoop, stopLoop } from '$lib/server/loop';
import { fanOutPending } from '$lib/server/updates/fanout';
import { sameOriginForms } from '$lib/server/csrf';
import { forgetPublicReadsAfterWrites } from '$lib/server/public-cache';
import { cachePublicAnswers } from '$lib/server/public-answers';
import { securityHeaders } from '$lib/server/security-headers';
import { compressResponses } from '$lib/server/compression';
import { refuseUnreadableRequests } from '$lib/server/request-guard';
import { log, logRequests } from '$lib/server/log';

export const init: ServerInit = async () => {
	if (building) return;
	const env = checkEnvironment();
	if (!env.ok) {
		console.error(env.message);
		process.exit(1);
	}
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

const session: Handle = async ({ event, resolve }) => {
	const { user, session } = await readSession(event.cookies, event.url);
	event.locals.user = user;
	event.locals.session = session;
	return resolve(event);
};

// The web fonts of the first screen (src/fonts.css) load with the stylesheet, not after it, so
// that they are usually in before the first paint: no swap, no layout shift.
const preloadFonts: Handle = ({ event, resolve }) =>
	resolve(event, { preload: ({ type }) => type === 'js' || type === 'css' || type === 'font' });

// A NUL in the address or an address over 8 KB is refused before any step (the session lookup
// included) takes its values to the database.
export const handle = sequence(
	logRequests,
	// Outside every other step, so that it compresses the answer they have finished.
	compressResponses,
	// Around every later step, so that every answer has them, refused form posts included.
	securityHeaders,
	refuseUnreadableRequests,
	sameOriginForms,
	forgetPublicReadsAfterWrites,
	cachePublicAnswers,
	session,
	preloadFonts
);

export const handleError: HandleServerError = ({ error, event, status }) => {
	if (status >= 500) log().error({ err: error, status, route: event.route.id }, 'request failed');
	return {
		message: status >= 500 ? 'Something went wrong on our side. Please try again.' : 'Not found.'
	};
};
