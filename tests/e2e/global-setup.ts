import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { TestProject } from 'vitest/node';

function freePort(): Promise<number> {
	return new Promise((resolve, reject) => {
		const server = createServer();
		server.once('error', reject);
		server.listen(0, '127.0.0.1', () => {
			const address = server.address();
			server.close(() => resolve(typeof address === 'object' && address ? address.port : 0));
		});
	});
}

async function waitForHealth(url: string, server: ChildProcess, output: () => string) {
	const deadline = Date.now() + 60_000;
	while (Date.now() < deadline) {
		if (server.exitCode !== null) throw new Error(`The server exited early:\n${output()}`);
		try {
			const res = await fetch(`${url}/healthz`);
			if (res.ok) return;
		} catch {
			// not listening yet
		}
		await new Promise((r) => setTimeout(r, 250));
	}
	throw new Error(`The server did not answer /healthz within 60 s:\n${output()}`);
}

export default async function setup(project: TestProject) {
	const dataDir = mkdtempSync(join(tmpdir(), 'tideward-e2e-'));
	const port = await freePort();
	const baseURL = `http://localhost:${port}`;
	let log = '';
	const server = spawn(process.execPath, ['server.js'], {
		env: {
			...process.env,
			PORT: String(port),
			HOST: '127.0.0.1',
			ORIGIN: baseURL,
			DATA_DIR: dataDir,
			TIDEWARD_DEMO: '1',
			SMTP_URL: '',
			BODY_SIZE_LIMIT: '64M',
			STORY_SCHEDULER_MS: '1000'
		},
		stdio: ['ignore', 'pipe', 'pipe']
	});
	server.stdout?.on('data', (d) => (log += d));
	server.stderr?.on('data', (d) => (log += d));
	await waitForHealth(baseURL, server, () => log);
	project.provide('baseURL', baseURL);
	project.provide('dataDir', dataDir);
	return async () => {
		server.kill('SIGTERM');
		await new Promise((r) => server.once('exit', r));
		rmSync(dataDir, { recursive: true, force: true });
	};
}

declare module 'vitest' {
	export interface ProvidedContext {
		baseURL: string;
		dataDir: string;
	}
}
