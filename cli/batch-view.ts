// A batch as the hub answers it (GET /api/v1/batches/{id}), and how the CLI sums it up.
import { EXIT } from './exit-codes';

export interface BatchCounts {
	rows: number;
	accepted: number;
	rejected: number;
	errors: number;
	warnings: number;
	created: number;
	updated: number;
	unchanged: number;
	withdrawn: number;
}

export interface BatchView {
	id: string;
	district: { code: string; name: string };
	mode: 'check' | 'all' | 'valid';
	status: 'received' | 'checking' | 'done' | 'failed';
	valid: boolean | null;
	committed: boolean;
	file_name: string | null;
	format: string;
	size_bytes: number;
	sha256: string;
	schema_version: string;
	progress: { rows_done: number };
	counts: BatchCounts;
	findings_omitted: number;
	failure: string | null;
	created_at: string;
	finished_at: string | null;
	links: { self: string; findings: string; findings_csv: string };
}

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
		parts.push(`${would}${c.created} created, ${c.updated} updated, ${c.unchanged} unchanged, ${c.withdrawn} withdrawn`);
	}
	if (b.mode === 'all' && c.errors > 0) parts.push('nothing saved (mode all)');
	return `${head}: ${parts.join('; ')}`;
}
