#!/usr/bin/env node
// `npm run bench:http [-- --no-build] [-- --seconds 10]`: the production server
// (`node server.js`) on a throwaway copy of the demo data, measured with autocannon on loopback at
// 32 connections, one target after another in one run: a static asset, a patient page (plain and
// gzip), the patients API and a journey API. The APIs are asked the way a returning browser asks, with the ETag it holds
// (If-None-Match), so they answer 304. Each page's requests/s is reported as a ratio of the
// static asset's, measured in the same run (these shared 2-core machines are noisy; compare
// ratios, not absolute figures across runs). Traffic goes to 127.0.0.1 only, bounded in time.
import autocannon from 'autocannon';
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { createServer } from 'node:net';
import { loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';

const args = process.argv.slice(2);
const seconds = Number(args[args.indexOf('--seconds') + 1] || 10) || 10;
const connections = 32;
const PATIENT = 'perla'; // a released demo patient with a public journey

/** @returns {Promise<number>} */
function freePort() {
	return new Promise((resolve, reject) => {
		const server = createServer();
		server.once('error', reject);
		server.listen(0, '127.0.0.1', () => {
			const address = server.address();
			server.close(() => resolve(typeof address === 'object' && address ? address.port : 0));
		});
	});
}

/** @param {string} url @param {number} ms */
async function waitFor(url, ms) {
	const deadline = Date.now() + ms;
	while (Date.now() < deadline) {
		try {
			const response = await fetch(url);
			if (response.ok) return response;
		} catch {
			// not listening yet
		}
		await new Promise((r) => setTimeout(r, 250));
	}
	throw new Error(`${url} did not answer 200 within ${ms / 1000} s.`);
}

if (!args.includes('--no-build') || !existsSync('build/index.js')) {
	console.log('Building Tideward…');
	const build = spawnSync('npx', ['vite', 'build', '--logLevel', 'warn'], { stdio: 'inherit' });
	if (build.status !== 0) process.exit(build.status ?? 1);
}

const dataDir = mkdtempSync(join(tmpdir(), 'tideward-bench-http-'));
const port = await freePort();
const base = `http://127.0.0.1:${port}`;
const server = spawn(process.execPath, ['server.js'], {
	env: {
		...process.env,
		NODE_ENV: 'production',
		PORT: String(port),
		HOST: '127.0.0.1',
		ORIGIN: base,
		DATA_DIR: dataDir,
		TIDEWARD_DEMO: '1',
		SMTP_URL: '',
		LOG_LEVEL: 'warn'
	},
	stdio: ['ignore', 'ignore', 'inherit']
});

/** @typedef {{ name: string, path: string, headers?: Record<string, string>, expect: number, unique?: boolean }} Target */

try {
	await waitFor(`${base}/healthz`, 90_000);
	// The journey is projected once the demo has loaded; wait for it.
	const journey = await waitFor(`${base}/api/patients/${PATIENT}/journey`, 90_000);
	const patients = await fetch(`${base}/api/patients`);
	const home = await (await fetch(`${base}/`)).text();
	const asset = home.match(/\/_app\/immutable\/[^"']+\.js/)?.[0];
	if (!asset) throw new Error('No immutable script found on the home page.');

	/** @type {Target[]} */
	const targets = [
		{ name: 'static asset', path: asset, expect: 200 },
		{ name: 'patient page', path: `/patients/${PATIENT}`, expect: 200 },
		{
			// As browsers ask: gzip, each copy with its own nonce.
			name: 'patient page, gzip',
			path: `/patients/${PATIENT}`,
			headers: { 'accept-encoding': 'gzip' },
			expect: 200
		},
		{
			// Each request a new address, so none is answered from the page cache: the cost of a
			// render (the public reads themselves still come from their short-lived cache).
			name: 'patient page, rendered every time',
			path: `/patients/${PATIENT}?render=`,
			expect: 200,
			unique: true
		},
		{
			name: 'patients API (ETag hit)',
			path: '/api/patients',
			headers: { 'if-none-match': patients.headers.get('etag') ?? '' },
			expect: 304
		},
		{
			name: 'journey API (ETag hit)',
			path: `/api/patients/${PATIENT}/journey`,
			headers: { 'if-none-match': journey.headers.get('etag') ?? '' },
			expect: 304
		}
	];

	console.log(
		`node ${process.version}, ${new Date().toISOString()}, ${connections} connections, ${seconds} s per target after a 2 s warm-up, load average ${loadavg()[0].toFixed(1)}`
	);
	/** @type {{ name: string, path: string, rps: number, p50: number, p99: number, errors: number }[]} */
	const rows = [];
	for (const target of targets) {
		const url = base + target.path;
		const check = await fetch(url, { headers: target.headers });
		if (check.status !== target.expect) {
			throw new Error(
				`${target.name}: ${url} answered ${check.status}, expected ${target.expect}.`
			);
		}
		let n = 0;
		/** @type {Partial<import('autocannon').Options>} */
		const options = {
			url,
			connections,
			headers: target.headers,
			requests: target.unique
				? [{ setupRequest: (request) => ({ ...request, path: `${target.path}${++n}` }) }]
				: undefined
		};
		await autocannon({ ...options, url, duration: 2 });
		const result = await autocannon({ ...options, url, duration: seconds });
		const unexpected = result.non2xx - (target.expect === 304 ? result['3xx'] : 0);
		rows.push({
			name: target.name,
			path: target.path,
			rps: result.requests.average,
			p50: result.latency.p50,
			p99: result.latency.p99,
			errors: result.errors + result.timeouts + unexpected
		});
	}
	const staticRps = rows[0].rps;
	const goals = /** @type {Record<string, number>} */ ({
		'patient page': 0.3,
		'patients API (ETag hit)': 0.7,
		'journey API (ETag hit)': 0.7
	});
	console.log('\n| target | requests/s | p50 ms | p99 ms | ratio to static | goal | errors |');
	console.log('| --- | --: | --: | --: | --: | --: | --: |');
	let missed = false;
	for (const row of rows) {
		const ratio = row.rps / staticRps;
		const goal = goals[row.name];
		if (goal !== undefined && ratio < goal) missed = true;
		if (row.errors > 0) missed = true;
		console.log(
			`| ${row.name} \`${row.path.length > 40 ? row.path.slice(0, 37) + '…' : row.path}\` | ${Math.round(row.rps).toLocaleString('en-US')} | ${row.p50} | ${row.p99} | ${row.name === 'static asset' ? '1' : ratio.toFixed(2)} | ${goal === undefined ? '' : `≥ ${goal}`} | ${row.errors} |`
		);
	}
	if (missed) {
		console.log('\nA goal was missed (or requests failed).');
		process.exitCode = 1;
	}
} finally {
	server.kill('SIGTERM');
	await new Promise((r) => server.once('exit', r));
	rmSync(dataDir, { recursive: true, force: true });
}
