import { Readable } from 'node:stream';
import type { ParseItem, ParsedPosition, RowProblem } from './types';

/** `text` as a byte stream, cut into `chunkSize`-byte pieces to exercise chunk boundaries. */
export function streamOf(text: string | Uint8Array, chunkSize = 7): Readable {
	const bytes = typeof text === 'string' ? Buffer.from(text, 'utf8') : Buffer.from(text);
	const chunks: Buffer[] = [];
	for (let i = 0; i < bytes.length; i += chunkSize) chunks.push(bytes.subarray(i, i + chunkSize));
	return Readable.from(chunks, { objectMode: false });
}

export async function collect(items: AsyncIterable<ParseItem>): Promise<ParseItem[]> {
	const all: ParseItem[] = [];
	for await (const item of items) all.push(item);
	return all;
}

export function positions(items: ParseItem[]): ParsedPosition[] {
	return items.flatMap((item) => (item.ok ? [item.position] : []));
}

export function problems(items: ParseItem[]): RowProblem[] {
	return items.flatMap((item) => (item.ok ? [] : item.problems));
}

/** 2024-06-01T00:00:00Z, the "now" of every test */
export const NOW = Date.UTC(2024, 5, 1);
