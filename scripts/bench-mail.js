#!/usr/bin/env node
// `npm run bench:mail`: bundles scripts/bench/mail.ts with esbuild and runs it, as
// bench-tracking.js does for the others; the mail code imports `$lib/…`, which the bundle
// resolves to src/lib. Arguments after `--` go to the bench (`--catcher`: store into the database
// through the local catcher instead of a sink that discards the mail).
import { build } from 'esbuild';
import { spawnSync } from 'node:child_process';
import { resolve } from 'node:path';

const outfile = resolve('node_modules/.cache/tideward-bench/mail.mjs');
await build({
	entryPoints: ['scripts/bench/mail.ts'],
	bundle: true,
	platform: 'node',
	format: 'esm',
	packages: 'external',
	alias: { $lib: resolve('src/lib') },
	outfile,
	logLevel: 'warning'
});
console.log(`node ${process.version}, ${new Date().toISOString()}`);
// A process of its own, so that the bench can collect garbage between measures (--expose-gc)
// and its peak memory is not the bundler's.
const run = spawnSync(process.execPath, ['--expose-gc', outfile, ...process.argv.slice(2)], {
	stdio: 'inherit'
});
process.exitCode = run.status ?? 1;
