// A batch as the hub answers it (GET /api/v1/batches/{id}), and how the CLI sums it up.
import type { Batch } from '../src/lib/schema/batch';
import { EXIT } from './exit-codes';

/** The batch resource, as the shared schema defines it (src/lib/schema/batch.ts). */
export type BatchView = Batch;

export const isFinished = (b: Pick<BatchView, 'status'>) => b.status === 'done' || b.status === 'failed';

/** 0 when all is well (or not finished yet), 2 when rows were rejected or errors found, 1 when the batch failed. */
export function batchExitCode(b: BatchView): number {
	if (b.status === 'failed') return b.counts.errors > 0 ? EXIT.rejected : EXIT.error;
	if (b.status !== 'done') return EXIT.ok;
	return b.counts.rejected > 0 || b.counts.errors > 0 || b.valid === false ? EXIT.rejected : EXIT.ok;
}

const plural = (n: number, word: string) => `${n.toLocaleString('en-US')} ${word}${n === 1 ? '' : 's'}`;

/** One line: what happened to the batch. */
export function summarizeBatch(b: BatchView, label: string): string {
	const head = `${label}: batch ${b.id} ${b.status} (mode ${b.mode}, district ${b.district.code})`;
	if (b.status === 'received' || b.status === 'checking') return `${head}; ${plural(b.progress.rows_done, 'row')} checked so far`;
	if (b.status === 'failed' && b.failure) return `${head}: ${b.failure}`;
	const c = b.counts;
	const parts = [
		plural(c.rows, 'row'),
		`${c.accepted.toLocaleString('en-US')} ${b.mode === 'check' ? 'would be accepted' : 'accepted'}`,
		`${c.rejected.toLocaleString('en-US')} rejected`,
		`${plural(c.errors, 'error')}, ${plural(c.warnings, 'warning')}`
	];
	if (b.mode !== 'check' || c.created + c.updated + c.unchanged + c.withdrawn > 0) {
		const would = b.mode === 'check' ? 'would be ' : '';
		const n = (x: number) => x.toLocaleString('en-US');
		parts.push(`${would}${n(c.created)} created, ${n(c.updated)} updated, ${n(c.unchanged)} unchanged, ${n(c.withdrawn)} withdrawn`);
	}
	if (b.mode === 'all' && c.errors > 0) parts.push('nothing saved (mode all)');
	return `${head}: ${parts.join('; ')}`;
}
