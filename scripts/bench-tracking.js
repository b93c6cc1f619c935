#!/usr/bin/env node
// `npm run bench:tracking` (or `bench:landmask`): bundles scripts/bench/<name>.ts with esbuild and
// runs it; the name is the first argument, `tracking` by default.
import { build } from 'esbuild';
import { spawnSync } from 'node:child_process';
import { resolve } from 'node:path';

// Inside the project so the bundle resolves packages from node_modules.
const name = process.argv[2] ?? 'tracking';
if (!/^[a-z-]+$/.test(name)) throw new Error(`No benchmark called ${name}`);
const outfile = resolve(`node_modules/.cache/tideward-bench/${name}.mjs`);
await build({
	entryPoints: [`scripts/bench/${name}.ts`],
	bundle: true,
	platform: 'node',
	format: 'esm',
	packages: 'external',
	outfile,
	logLevel: 'warning'
});
console.log(`node ${process.version}, ${new Date().toISOString()}`);
// A process of its own, so that the bench can collect garbage between measures (--expose-gc)
// and its peak memory is not the bundler's.
const run = spawnSync(process.execPath, ['--expose-gc', outfile], { stdio: 'inherit' });
process.exitCode = run.status ?? 1;
