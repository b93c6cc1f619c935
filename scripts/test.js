#!/usr/bin/env node
// `npm test`: unit and integration tests (vitest), then a production build, then the browser
// tests (vitest driving Debian's Chromium through playwright-core against the built server).
// Browser tests never skip: without Chromium this installs it (as root) or stops with a sentence
// saying what to install.
import { spawnSync } from 'node:child_process';
import { ensureChromium } from './chromium.js';

const e2eOnly = process.argv.includes('--e2e-only');
const chromium = ensureChromium();

/** @param {string} label @param {string[]} args */
function run(label, args) {
	console.log(`\n── ${label} ──`);
	const result = spawnSync('npx', args, {
		stdio: 'inherit',
		env: { ...process.env, CHROMIUM_PATH: chromium }
	});
	if (result.status !== 0) {
		console.error(`\n${label} failed.`);
		process.exit(result.status ?? 1);
	}
}

if (!e2eOnly) run('Unit and integration tests', ['vitest', 'run']);
run('Production build for the browser tests', ['vite', 'build', '--logLevel', 'warn']);
run('Browser tests (Chromium)', ['vitest', 'run', '--config', 'vitest.e2e.config.ts']);
console.log('\nAll test suites passed.');
