// Processing one batch (run by a queue worker): the archived file is streamed back from object storage
// through the file reader and the record checker; findings are stored as they come; progress is
// recorded on the batch; records are written in chunks inside ONE transaction per batch:
//   check → nothing written (the counts say what would happen);
//   all   → any error → the transaction is rolled back, nothing written;
//   valid → valid rows written, the rest reported.
// A crash anywhere leaves the transaction uncommitted (nothing written); the batch is taken up again.
import { PassThrough, type Readable } from 'node:stream';
import { sql, type Transaction } from 'kysely';
import type { Finding } from '$lib/schema/findings';
import { getDb, getPool } from '../db';
import type { BatchMode, Database } from '../db/schema';
import { config } from '../config';
import { logger } from '../log';
import { queueMail } from '../mail/queue';
import { tryLockDistrictRecords, upsertRecords, type IncomingRecord, type Outcome } from '../records/upsert';
import { afterRecordsChanged } from '../records/changes';
import { getObjectStore } from '../storage/object-store';
import { checkEventFile, checkFile, declaredCharset, loadCheckContext, type CheckEventOf } from './intake-schema';
import { loadEventCheckContext } from '../events/context';
import { upsertEvents } from '../events/upsert';
import type { PracticeEventV1 } from '$lib/schema/practice-event';

const CHUNK_ROWS = Number(process.env.BATCH_CHUNK_ROWS ?? 1000);
/** Records per derived-data refresh at the end of a batch. */
const REFRESH_SLICE = 10_000;
const FINDINGS_FLUSH = 1000;
/** Findings stored per batch; more are counted (by code and column) but not listed. */
export const MAX_STORED_FINDINGS = Number(process.env.MAX_STORED_FINDINGS ?? 100_000);

class Rollback extends Error {}

/** Raised by the storage stream: a passing failure, the job is retried (not a finding about the file). */
class SourceError extends Error {}

export interface ProcessOutcome {
	status: 'done' | 'skipped';
}

interface Tally {
	rows: number;
	rejectedRows: number;
	errors: number;
	warnings: number;
	fileErrors: number;
	outcomes: Record<Outcome, number>;
	byCode: Map<string, number>;
	byColumn: Map<string, number>;
	encoding: string | null;
	stored: number;
	omitted: number;
}

function bump(m: Map<string, number>, k: string) {
	m.set(k, (m.get(k) ?? 0) + 1);
}

/**
 * Processes a batch unless another worker holds it. Safe to call twice for one batch (retries,
 * recovery, duplicate jobs): a per-batch advisory lock admits one worker; a finished batch is skipped.
 */
export async function processBatch(batchId: string): Promise<ProcessOutcome> {
	const lockClient = await getPool().connect();
	const lockKey = `runnel:batch:${batchId}`;
	let locked = false;
	try {
		const r = await lockClient.query<{ ok: boolean }>('select pg_try_advisory_lock(hashtextextended($1, 0)) as ok', [lockKey]);
		locked = r.rows[0].ok;
		if (!locked) return { status: 'skipped' };
		return await processLocked(batchId);
	} finally {
		if (locked) await lockClient.query('select pg_advisory_unlock(hashtextextended($1, 0))', [lockKey]).catch(() => {});
		lockClient.release();
	}
}

async function processLocked(batchId: string): Promise<ProcessOutcome> {
	const db = getDb();
	const batch = await db
		.selectFrom('batches as b')
		.innerJoin('districts as d', 'd.id', 'b.district_id')
		.select([
			'b.id',
			'b.district_id',
			'b.mode',
			'b.status',
			'b.format',
			'b.sheet',
			'b.archive_key',
			'b.actor',
			'b.file_name',
			'b.content_type',
			'b.record_type',
			'd.code as district_code',
			'd.name as district_name',
			'd.contacts',
			'd.notify_on_rejected'
		])
		.where('b.id', '=', batchId)
		.executeTakeFirst();
	if (!batch || batch.status === 'done' || batch.status === 'failed') return { status: 'skipped' };

	// A fresh start: findings of an interrupted earlier attempt are dropped, counts reset.
	await db.deleteFrom('batch_findings').where('batch_id', '=', batchId).execute();
	await db
		.updateTable('batches')
		.set({
			status: 'checking',
			started_at: sql`coalesce(started_at, now())` as unknown as Date,
			heartbeat_at: sql`now()` as unknown as Date,
			attempts: sql`attempts + 1` as unknown as number,
			rows_done: 0,
			failure: null
		})
		.where('id', '=', batchId)
		.execute();

	const ctx = await loadCheckContext(db, { districtId: batch.district_id });
	const store = await getObjectStore();
	const mode = batch.mode as BatchMode;
	/** Upkeep events (schema practice-event) rather than practice records. */
	const isEvents = batch.record_type === 'events';

	const tally: Tally = {
		rows: 0,
		rejectedRows: 0,
		errors: 0,
		warnings: 0,
		fileErrors: 0,
		outcomes: { created: 0, updated: 0, unchanged: 0, withdrawn: 0 },
		byCode: new Map(),
		byColumn: new Map(),
		encoding: null,
		stored: 0,
		omitted: 0
	};
	let pendingFindings: Finding[] = [];
	const flushFindings = async () => {
		if (pendingFindings.length === 0) return;
		const f = pendingFindings;
		pendingFindings = [];
		const first = tally.stored;
		tally.stored += f.length;
		// Findings are written outside the records transaction: they are the report, kept even when
		// an `all` batch writes nothing.
		await sql`
			insert into batch_findings (batch_id, seq, code, severity, "row", "column", column_number, cell, value, rule, message)
			select ${batchId}::bigint, u.seq, u.code, u.severity, u.r, u.col, u.colnum, u.cell, u.value, u.rule::jsonb, u.message
			from unnest(${f.map((_, i) => first + i)}::int[], ${f.map((x) => x.code)}::text[], ${f.map((x) => x.severity)}::text[],
				${f.map((x) => x.row)}::int[], ${f.map((x) => x.column)}::text[], ${f.map((x) => x.column_number)}::int[],
				${f.map((x) => x.cell)}::text[], ${f.map((x) => x.value)}::text[], ${f.map((x) => (x.rule ? JSON.stringify(x.rule) : null))}::text[],
				${f.map((x) => x.message)}::text[])
				as u(seq, code, severity, r, col, colnum, cell, value, rule, message)`.execute(db);
	};
	const addFinding = async (f: Finding) => {
		if (f.severity === 'error') {
			tally.errors++;
			if (f.row === null) tally.fileErrors++;
		} else tally.warnings++;
		bump(tally.byCode, f.code);
		if (f.column) bump(tally.byColumn, f.column);
		if (tally.stored + pendingFindings.length >= MAX_STORED_FINDINGS) {
			tally.omitted++;
			return;
		}
		pendingFindings.push(f);
		if (pendingFindings.length >= FINDINGS_FLUSH) await flushFindings();
	};

	let lastBeat = Date.now();
	const heartbeat = async (force = false) => {
		if (!force && Date.now() - lastBeat < 1000) return;
		lastBeat = Date.now();
		await db
			.updateTable('batches')
			.set({ status: 'checking', rows_done: tally.rows, heartbeat_at: sql`now()` as unknown as Date })
			.where('id', '=', batchId)
			.execute();
	};

	const writes = mode !== 'check';
	let chunk: IncomingRecord[] = [];
	// One chunk is written while the next is read and checked (the database works on its own core);
	// at most one write is in flight, so memory stays at two chunks.
	let inflight: Promise<void> | null = null;
	// Records written by the chunks: derived data (rollups, review queue) is refreshed once for all of
	// them before the batch commits, not once per chunk.
	const changedIds: string[] = [];
	const flushChunk = async (trx: Transaction<Database>) => {
		if (chunk.length === 0) return;
		const items = chunk;
		chunk = [];
		// `all` stops writing at the first error (the transaction will be rolled back anyway).
		const dryRun = !writes || (mode === 'all' && tally.errors > 0) || tally.fileErrors > 0;
		const previous = inflight;
		if (previous) await previous;
		const uctx = { districtId: batch.district_id, batchId, actor: batch.actor, dryRun, deferChanges: changedIds };
		const write = (
			isEvents
				? upsertEvents(
						trx,
						uctx,
						items.map((it) => it.record as unknown as PracticeEventV1)
					)
				: upsertRecords(trx, uctx, items)
		).then((res) => {
			for (const o of res.outcomes) tally.outcomes[o]++;
		});
		// Observed here so a failure is not "unhandled" while reading goes on; it is thrown at the next await.
		write.catch(() => {});
		inflight = write;
	};
	const drainWrites = async () => {
		const last = inflight;
		inflight = null;
		if (last) await last;
	};

	const source = await store.get(batch.archive_key);
	const guarded = guardSource(source);

	const run = async (trx: Transaction<Database>) => {
		// Batches of one district are written one after another; keep reporting while waiting our turn.
		if (writes)
			while (!(await tryLockDistrictRecords(trx, batch.district_id))) {
				await new Promise((r) => setTimeout(r, 500));
				await heartbeat(true);
			}
		try {
			const readOpts = { sheet: batch.sheet ?? undefined, encoding: declaredCharset(batch.content_type) };
			// Events are checked against the district's records as they stand under the write lock.
			const events: AsyncIterable<CheckEventOf<unknown>> = isEvents
				? checkEventFile(guarded, batch.format, await loadEventCheckContext(trx, batch.district_id), readOpts)
				: checkFile(guarded, batch.format, ctx, readOpts);
			for await (const ev of events) {
				if (ev.kind === 'source') tally.encoding = ev.encoding ?? null;
				else if (ev.kind === 'file-finding') await addFinding(ev.finding);
				else if (ev.kind === 'row') {
					tally.rows++;
					for (const f of ev.findings) await addFinding(f);
					if (ev.record) {
						chunk.push({
							record: ev.record as unknown as Record<string, unknown>,
							warnings: ev.findings.filter((f) => f.severity === 'warning')
						});
						if (chunk.length >= CHUNK_ROWS) await flushChunk(trx);
					} else tally.rejectedRows++;
					await heartbeat();
				}
			}
		} catch (e) {
			if (e instanceof SourceError) throw e;
			// The reader turns bad content into findings; anything it still throws is reported the same way.
			logger.warn({ err: e, batchId }, 'batch file could not be read to the end');
			await addFinding({
				code: 'file-unreadable',
				severity: 'error',
				row: null,
				column: null,
				column_number: null,
				cell: null,
				value: null,
				rule: null,
				message:
					'The file could not be read to the end. Nothing from it was saved. Check that it is a complete, unprotected file in the format it was sent as.'
			});
		}
		await flushChunk(trx);
		await drainWrites();
		await flushFindings();
		await heartbeat(true);

		const fileRejected = tally.fileErrors > 0;
		const rowRejected = tally.rejectedRows;
		const nothingWritten = fileRejected || (mode === 'all' && tally.errors > 0);
		if (writes && !nothingWritten && changedIds.length > 0) {
			// In slices, so memory stays bounded for files of any size (each slice is a complete refresh step).
			const ids = [...new Set(changedIds)];
			for (let i = 0; i < ids.length; i += REFRESH_SLICE) {
				await afterRecordsChanged(trx, ids.slice(i, i + REFRESH_SLICE));
				await heartbeat(true);
			}
		}
		const rejected = nothingWritten ? tally.rows : Math.min(rowRejected, tally.rows);
		const accepted = tally.rows - rejected;
		const committed = writes && !nothingWritten;
		const final = {
			status: 'done' as const,
			rows: tally.rows,
			rows_done: tally.rows,
			accepted,
			rejected,
			errors: tally.errors,
			warnings: tally.warnings,
			created: nothingWritten ? 0 : tally.outcomes.created,
			updated: nothingWritten ? 0 : tally.outcomes.updated,
			unchanged: nothingWritten ? 0 : tally.outcomes.unchanged,
			withdrawn: nothingWritten ? 0 : tally.outcomes.withdrawn,
			findings_by_code: JSON.stringify(Object.fromEntries(tally.byCode)),
			findings_by_column: JSON.stringify(Object.fromEntries(tally.byColumn)),
			findings_omitted: tally.omitted,
			encoding: tally.encoding,
			finished_at: sql`now()` as unknown as Date,
			heartbeat_at: sql`now()` as unknown as Date,
			committed_at: committed ? (sql`now()` as unknown as Date) : null
		};
		return { final, rejected, committed, accepted };
	};

	const finish = async (trx: Transaction<Database>, f: Awaited<ReturnType<typeof run>>) => {
		await trx.updateTable('batches').set(f.final).where('id', '=', batchId).execute();
		if (mode !== 'check' && f.rejected > 0 && batch.notify_on_rejected) {
			const to = (batch.contacts ?? []).map((c) => c.email).filter(Boolean);
			if (to.length > 0) await queueMail(trx, batchResultMail(to, batch, f.final, f.committed));
		}
	};

	if (writes) {
		let result: Awaited<ReturnType<typeof run>> | undefined;
		try {
			await db.transaction().execute(async (trx) => {
				result = await run(trx);
				if (!result.committed) throw new Rollback();
				await finish(trx, result);
			});
		} catch (e) {
			if (!(e instanceof Rollback)) throw e;
			await db.transaction().execute((trx) => finish(trx, result!));
		}
	} else {
		await db.transaction().execute(async (trx) => finish(trx, await run(trx)));
	}
	return { status: 'done' };
}

/** Marks storage-stream failures so they are retried instead of reported as a bad file. */
function guardSource(source: Readable): Readable {
	const out = new PassThrough();
	source.on('error', (e) => out.destroy(new SourceError(`object storage: ${e.message}`)));
	source.pipe(out);
	return out;
}

function batchResultMail(
	to: string[],
	batch: { id: string; mode: string; file_name: string | null; district_code: string; district_name: string },
	f: { rows: number; accepted: number; rejected: number; errors: number; warnings: number },
	committed: boolean
) {
	const link = `${config.origin}/batches/${batch.id}`;
	const what = batch.file_name ? `“${batch.file_name}”` : `batch ${batch.id}`;
	const subject = `Runnel: ${f.rejected} of ${f.rows} rows rejected in ${what} (${batch.district_code})`;
	const text = [
		`Runnel checked ${what} for ${batch.district_name} (mode: ${batch.mode}).`,
		'',
		`Rows read: ${f.rows}`,
		`Saved: ${f.accepted}${committed ? '' : ' (nothing was saved)'}`,
		`Rejected: ${f.rejected}`,
		`Errors: ${f.errors}   Warnings: ${f.warnings}`,
		'',
		`The findings (row, column and what to fix) are at: ${link}`,
		'',
		'You receive this because your district asked to be told when a batch has rejected rows.'
	].join('\n');
	return { kind: 'batch-result' as const, to, subject, text };
}
