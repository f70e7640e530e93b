// Shapes batch rows as the API answers them (src/lib/schema/batch.ts).
import type { Batch as BatchRow } from '../db/schema';
import type { Batch } from '$lib/schema/batch';

export type BatchWithDistrict = BatchRow & { district_code: string; district_name: string };

const iso = (d: Date | null) => (d ? new Date(d).toISOString() : null);

export function batchPath(id: string): string {
	return `/api/v1/batches/${id}`;
}

export function toBatchView(b: BatchWithDistrict): Batch {
	const done = b.status === 'done';
	return {
		id: String(b.id),
		district: { code: b.district_code, name: b.district_name },
		mode: b.mode,
		type: b.record_type,
		status: b.status,
		valid: done ? b.errors === 0 : null,
		committed: b.committed_at !== null,
		file_name: b.file_name,
		format: b.format,
		content_type: b.content_type,
		sheet: b.sheet,
		encoding: b.encoding,
		size_bytes: Number(b.size_bytes),
		sha256: b.sha256.trim(),
		schema_version: b.schema_version,
		progress: { rows_done: b.rows_done },
		counts: {
			rows: b.rows,
			accepted: b.accepted,
			rejected: b.rejected,
			errors: b.errors,
			warnings: b.warnings,
			created: b.created,
			updated: b.updated,
			unchanged: b.unchanged,
			withdrawn: b.withdrawn
		},
		findings_by_code: b.findings_by_code ?? {},
		findings_by_column: b.findings_by_column ?? {},
		findings_omitted: b.findings_omitted,
		failure: b.failure,
		actor: b.actor,
		created_at: iso(b.created_at)!,
		started_at: iso(b.started_at),
		finished_at: iso(b.finished_at),
		links: {
			self: batchPath(String(b.id)),
			findings: `${batchPath(String(b.id))}/findings`,
			findings_csv: `${batchPath(String(b.id))}/findings?format=csv`
		}
	};
}
