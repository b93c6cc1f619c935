#!/usr/bin/env node
// `npm run bench:tracking`: bundles scripts/bench/tracking.ts with esbuild and runs it.
import { build } from 'esbuild';
import { resolve } from 'node:path';
import { pathToFileURL } from 'node:url';

// Inside the project so the bundle resolves packages from node_modules.
const outfile = resolve('node_modules/.cache/tideward-bench/tracking.mjs');
await build({
	entryPoints: ['scripts/bench/tracking.ts'],
	bundle: true,
	platform: 'node',
	format: 'esm',
	packages: 'external',
	outfile,
	logLevel: 'warning'
});
console.log(`node ${process.version}, ${new Date().toISOString()}`);
await import(pathToFileURL(outfile).href);
