// Helpers for reader tests: feed bytes in chunks of a given size, collect events.
import type { Finding } from '../../../src/lib/schema/findings';
import type { RowEvent } from '../../../src/lib/server/ingest/read-rows';

/** The bytes as an async stream of `size`-byte chunks (default: one chunk). */
export async function* chunked(bytes: Uint8Array, size = bytes.length || 1): AsyncGenerator<Uint8Array> {
	for (let i = 0; i < bytes.length; i += size) {
		await Promise.resolve();
		yield bytes.subarray(i, i + size);
	}
}

export async function collect<T>(gen: AsyncIterable<T>): Promise<T[]> {
	const out: T[] = [];
	for await (const e of gen) out.push(e);
	return out;
}

export const rows = (ev: RowEvent[]) => ev.filter((e): e is Extract<RowEvent, { kind: 'row' }> => e.kind === 'row');
export const findingsOf = (ev: RowEvent[]): Finding[] =>
	ev.filter((e) => e.kind === 'finding').map((e) => (e as Extract<RowEvent, { kind: 'finding' }>).finding);
