// Finds Debian's Chromium for the browser tests, installing it when we run as root.
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';

export const CHROMIUM = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium';

/** @returns {string} the path of a working Chromium; exits the process when there is none */
export function ensureChromium() {
	if (existsSync(CHROMIUM)) return CHROMIUM;
	const root = typeof process.getuid === 'function' && process.getuid() === 0;
	if (!root || process.env.CHROMIUM_PATH) {
		console.error(
			`Browser tests need Chromium at ${CHROMIUM}: install Debian's package with "sudo apt-get install -y chromium" (or set CHROMIUM_PATH), then run the tests again.`
		);
		process.exit(1);
	}
	console.log("Chromium is missing: installing Debian's chromium package…");
	const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
	const update = spawnSync('apt-get', ['update'], { stdio: 'inherit', env });
	const install =
		update.status === 0
			? spawnSync('apt-get', ['install', '-y', '--no-install-recommends', 'chromium'], {
					stdio: 'inherit',
					env
				})
			: update;
	if (install.status !== 0 || !existsSync(CHROMIUM)) {
		console.error(
			`Installing Chromium failed: install Debian's package with "apt-get install -y chromium" and run the tests again.`
		);
		process.exit(1);
	}
	return CHROMIUM;
}
