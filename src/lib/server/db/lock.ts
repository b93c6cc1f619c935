import { closeSync, mkdirSync, openSync, readFileSync, rmSync, writeSync } from 'node:fs';
import { join } from 'node:path';

/**
 * PGlite does not lock its data folder, and two processes writing one folder corrupt it. We take
 * a lock file holding our PID: a live owner makes a second opener stop at once; a dead owner's
 * lock (after a crash or kill -9) is taken over. A PID file rather than a time-refreshed lock,
 * because PGlite's start-up can block the event loop long enough for a refresh to be missed.
 */
export class DataDirLockedError extends Error {
	constructor(dataDir: string, pid: number) {
		super(
			`The data folder ${dataDir} is in use by another Tideward process (pid ${pid}). ` +
				`Stop that process first, or set DATA_DIR to another folder.`
		);
		this.name = 'DataDirLockedError';
	}
}

function isAlive(pid: number): boolean {
	try {
		process.kill(pid, 0);
		return true;
	} catch (error) {
		return (error as NodeJS.ErrnoException).code === 'EPERM';
	}
}

export function lockDataDir(dataDir: string): () => void {
	mkdirSync(dataDir, { recursive: true });
	const lockPath = join(dataDir, 'tideward.lock');
	for (let attempt = 0; attempt < 3; attempt++) {
		try {
			const fd = openSync(lockPath, 'wx');
			writeSync(fd, String(process.pid));
			closeSync(fd);
			let released = false;
			return () => {
				if (released) return;
				released = true;
				rmSync(lockPath, { force: true });
			};
		} catch (error) {
			if ((error as NodeJS.ErrnoException).code !== 'EEXIST') throw error;
			const owner = Number.parseInt(readFileSync(lockPath, 'utf8').trim(), 10);
			if (Number.isInteger(owner) && owner !== process.pid && isAlive(owner)) {
				throw new DataDirLockedError(dataDir, owner);
			}
			rmSync(lockPath, { force: true });
		}
	}
	throw new Error(`Could not take the lock on ${dataDir}`);
}
