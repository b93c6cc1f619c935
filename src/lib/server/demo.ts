import { count } from 'drizzle-orm';
import { appOrigin } from './config';
import { db } from './db';
import { organisationSettings } from './db/schema';
import { DEMO_PASSWORD, DEMO_USERS, seedDemo } from './db/seed/demo';

/** Demo mode (TIDEWARD_DEMO=1): loads the invented scenario into an empty database, once. */
export async function ensureDemoData(): Promise<'seeded' | 'reused'> {
	const [{ n }] = await db().select({ n: count() }).from(organisationSettings);
	if (n > 0) return 'reused';
	await seedDemo(db());
	return 'seeded';
}

export function printDemoBanner(
	state: 'seeded' | 'reused',
	dataDir: string,
	catcherPort: number | undefined
): void {
	const width = Math.max(...DEMO_USERS.map((u) => u.email.length));
	const lines = [
		'',
		'Tideward demo is running',
		`  Open      ${appOrigin()}/`,
		`  Data      ${dataDir} (${state === 'seeded' ? 'new demo data loaded' : 'existing data reused'}; npm run demo -- --reset starts over)`,
		`  Mail      every message is caught by the local SMTP server${catcherPort ? ` on 127.0.0.1:${catcherPort}` : ''}; admins read it at ${appOrigin()}/staff/mail`,
		'',
		`  Demo sign-ins (password for all: ${DEMO_PASSWORD})`,
		...DEMO_USERS.map((u) => `    ${u.email.padEnd(width)}  ${u.roles.join(', ')}`),
		'',
		'  Stop with Ctrl+C.',
		''
	];
	console.log(lines.join('\n'));
}
