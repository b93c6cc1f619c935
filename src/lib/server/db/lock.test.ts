import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { DataDirLockedError, lockDataDir } from './lock';

describe('data folder lock', () => {
	it('refuses a second process while the first holds the folder', () => {
		const dir = mkdtempSync(join(tmpdir(), 'tideward-lock-'));
		const release = lockDataDir(dir);
		const child = spawnSync(
			process.execPath,
			[
				'--input-type=module',
				'-e',
				`import { openSync } from 'node:fs';
				 try { openSync(${JSON.stringify(join(dir, 'tideward.lock'))}, 'wx'); console.log('took'); }
				 catch (e) { console.log(e.code); }`
			],
			{ encoding: 'utf8' }
		);
		expect(child.stdout.trim()).toBe('EEXIST');
		expect(readFileSync(join(dir, 'tideward.lock'), 'utf8')).toBe(String(process.pid));
		release();
		expect(existsSync(join(dir, 'tideward.lock'))).toBe(false);
	});

	it('names the owner when the folder is held by a live process', () => {
		const dir = mkdtempSync(join(tmpdir(), 'tideward-lock-'));
		// pid 1 is always alive and never ours
		writeFileSync(join(dir, 'tideward.lock'), '1');
		expect(() => lockDataDir(dir)).toThrow(DataDirLockedError);
		expect(() => lockDataDir(dir)).toThrow(/in use by another Tideward process \(pid 1\)/);
	});

	it('takes over a lock left by a process that died', () => {
		const dir = mkdtempSync(join(tmpdir(), 'tideward-lock-'));
		const dead = spawnSync(process.execPath, ['-e', 'process.stdout.write(String(process.pid))'], {
			encoding: 'utf8'
		}).stdout;
		writeFileSync(join(dir, 'tideward.lock'), dead);
		const release = lockDataDir(dir);
		expect(readFileSync(join(dir, 'tideward.lock'), 'utf8')).toBe(String(process.pid));
		release();
	});
});
