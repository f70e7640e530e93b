// Reading batches and their findings (API and pages). Access: a district principal sees its own
// district's batches only; everything else answers 404 for it.
import { stringify } from 'csv-stringify/sync';
import type { Kysely, Transaction } from 'kysely';
import { z } from 'zod';
import { neutraliseCell } from '$lib/domain/spreadsheet-safe';
import type { Batch, BatchFinding } from '$lib/schema/batch';
import type { Principal } from '../auth/principal';
import { getDb } from '../db';
import type { BatchMode, BatchStatus, Database } from '../db/schema';
import { decodeCursor, toPage, type Page } from '../http/cursor';
import { ApiError } from '../http/problem';
import { canReadDistrict, readableDistrictId } from '../records/access';
import { toBatchView, type BatchWithDistrict } from './views';

type Db = Kysely<Database> | Transaction<Database>;

function batchQuery(db: Db) {
	return db
		.selectFrom('batches as b')
		.innerJoin('districts as d', 'd.id', 'b.district_id')
		.selectAll('b')
		.select(['d.code as district_code', 'd.name as district_name']);
}

export async function getBatchView(db: Db, id: string): Promise<Batch | undefined> {
	const row = await batchQuery(db).where('b.id', '=', id).executeTakeFirst();
	return row ? toBatchView(row as BatchWithDistrict) : undefined;
}

function notFound(id: string): ApiError {
	return new ApiError({ status: 404, type: 'batch-not-found', detail: `There is no batch ${id} that you can see.` });
}

const ID = /^[1-9][0-9]{0,17}$/;

/** The batch if the principal may see it, else a 404 problem (never revealing other districts' batches). */
export async function batchForPrincipal(principal: Principal, id: string): Promise<Batch> {
	if (!ID.test(id)) throw notFound(id);
	const row = await batchQuery(getDb()).where('b.id', '=', id).executeTakeFirst();
	if (!row || !canReadDistrict(principal, row.district_id)) throw notFound(id);
	return toBatchView(row as BatchWithDistrict);
}

export interface BatchFilters {
	district: string | null;
	status: BatchStatus | null;
	mode: BatchMode | null;
	/** Records or events; absent: both. */
	type?: 'records' | 'events' | null;
}

const BatchCursor = z.object({ id: z.string().regex(ID) });

export async function listBatches(principal: Principal, url: URL, filters: BatchFilters, limit: number): Promise<Page<Batch>> {
	const db = getDb();
	const districtId = await readableDistrictId(db, principal, filters.district);
	const cursor = decodeCursor(url.searchParams.get('cursor'), BatchCursor);
	let q = batchQuery(db);
	if (districtId !== null) q = q.where('b.district_id', '=', districtId);
	if (filters.status) q = q.where('b.status', '=', filters.status);
	if (filters.mode) q = q.where('b.mode', '=', filters.mode);
	if (filters.type) q = q.where('b.record_type', '=', filters.type);
	if (cursor) q = q.where('b.id', '<', cursor.id);
	const rows = (await q
		.orderBy('b.id', 'desc')
		.limit(limit + 1)
		.execute()) as BatchWithDistrict[];
	return toPage(
		url,
		rows,
		limit,
		(r) => ({ id: String(r.id) }),
		(r) => toBatchView(r)
	);
}

export interface FindingFilters {
	severity: 'error' | 'warning' | null;
	code: string | null;
	column: string | null;
}

const FindingCursor = z.object({ seq: z.number().int().nonnegative() });

function findingView(r: Record<string, unknown>): BatchFinding {
	return {
		seq: r.seq as number,
		code: r.code as string,
		severity: r.severity as 'error' | 'warning',
		row: (r.row as number | null) ?? null,
		column: (r.column as string | null) ?? null,
		column_number: (r.column_number as number | null) ?? null,
		cell: (r.cell as string | null) ?? null,
		value: (r.value as string | null) ?? null,
		rule: (r.rule as Record<string, unknown> | null) ?? null,
		message: r.message as string
	};
}

function findingsQuery(batchId: string, filters: FindingFilters) {
	let q = getDb().selectFrom('batch_findings').selectAll().where('batch_id', '=', batchId);
	if (filters.severity) q = q.where('severity', '=', filters.severity);
	if (filters.code) q = q.where('code', '=', filters.code);
	if (filters.column) q = q.where('column', '=', filters.column);
	return q;
}

export async function listFindings(batchId: string, url: URL, filters: FindingFilters, limit: number): Promise<Page<BatchFinding>> {
	const cursor = decodeCursor(url.searchParams.get('cursor'), FindingCursor);
	let q = findingsQuery(batchId, filters);
	if (cursor) q = q.where('seq', '>', cursor.seq);
	const rows = await q
		.orderBy('seq')
		.limit(limit + 1)
		.execute();
	return toPage(url, rows as Array<Record<string, unknown>>, limit, (r) => ({ seq: r.seq as number }), findingView);
}

export const FINDING_CSV_COLUMNS = ['row', 'column', 'column_number', 'cell', 'severity', 'code', 'message', 'value', 'rule'] as const;

/** All findings of a batch as CSV, read in keyset pages and streamed (cells that look like formulas neutralised). */
export function findingsCsvStream(batchId: string, filters: FindingFilters): ReadableStream<Uint8Array> {
	const encoder = new TextEncoder();
	async function* pages(): AsyncGenerator<string> {
		yield '\ufeff' + stringify([[...FINDING_CSV_COLUMNS]]);
		let after = -1;
		for (;;) {
			const rows = await findingsQuery(batchId, filters).where('seq', '>', after).orderBy('seq').limit(1000).execute();
			if (rows.length === 0) return;
			after = rows[rows.length - 1].seq;
			yield stringify(
				rows.map((r) => {
					const f = findingView(r as Record<string, unknown>);
					return [
						f.row ?? '',
						neutraliseCell(f.column ?? ''),
						f.column_number ?? '',
						f.cell ?? '',
						f.severity,
						f.code,
						neutraliseCell(f.message),
						neutraliseCell(f.value ?? ''),
						f.rule ? neutraliseCell(JSON.stringify(f.rule)) : ''
					];
				})
			);
		}
	}
	const it = pages();
	return new ReadableStream<Uint8Array>({
		async pull(controller) {
			const next = await it.next();
			if (next.done) controller.close();
			else controller.enqueue(encoder.encode(next.value));
		},
		async cancel() {
			await it.return(undefined);
		}
	});
}
