#!/usr/bin/env node
// `npm run demo [-- --reset]`: builds Tideward, then starts it on the demo data folder with the
// local mail catcher. The server migrates the database and, when it is empty, loads the invented
// demo scenario (TIDEWARD_DEMO=1), then prints the address and the demo sign-ins.
import { spawn, spawnSync } from 'node:child_process';
import { rmSync } from 'node:fs';
import { resolve } from 'node:path';

const reset = process.argv.includes('--reset');
const port = process.env.PORT ?? '3000';
const dataDir = resolve(process.env.DATA_DIR ?? './data/demo');

console.log('Building Tideward…');
const build = spawnSync('npx', ['vite', 'build', '--logLevel', 'warn'], { stdio: 'inherit' });
if (build.status !== 0) process.exit(build.status ?? 1);

if (reset) {
	console.log(`Removing ${dataDir} to start over…`);
	rmSync(dataDir, { recursive: true, force: true });
}

const server = spawn(process.execPath, ['server.js'], {
	stdio: 'inherit',
	env: {
		...process.env,
		PORT: port,
		HOST: process.env.HOST ?? '127.0.0.1',
		ORIGIN: process.env.ORIGIN ?? `http://localhost:${port}`,
		DATA_DIR: dataDir,
		TIDEWARD_DEMO: '1',
		BODY_SIZE_LIMIT: process.env.BODY_SIZE_LIMIT ?? '64M',
		// The banner and warnings, not a JSON line per request, in the demo's terminal.
		LOG_LEVEL: process.env.LOG_LEVEL ?? 'warn'
	}
});
for (const signal of /** @type {const} */ (['SIGINT', 'SIGTERM'])) {
	process.on(signal, () => server.kill('SIGTERM'));
}
server.on('exit', (code) => process.exit(code ?? 0));
