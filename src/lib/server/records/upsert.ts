// Writing checked practice records, a chunk at a time: upsert by (district, local_id). A record identical
// to its current version (same canonical content hash) is left alone; a changed one gets a new version
// (batch, actor, time, changed field names); `status: withdrawn` withdraws; nothing is ever deleted.
// One statement per step for the whole chunk (unnest of arrays), never a query per row.
import { createHash } from 'node:crypto';
import { sql, type Transaction } from 'kysely';
import { canonicalData, changedFields, type RecordData } from '$lib/domain/record-content';
import type { Finding } from '$lib/schema/findings';
import type { Database } from '../db/schema';
import { afterRecordsChanged } from './changes';

export type Outcome = 'created' | 'updated' | 'unchanged' | 'withdrawn';

export interface IncomingRecord {
	/** The checked record (schema v1 field names). */
	record: RecordData;
	/** Warning findings the row carried (stored as the record's current warnings). */
	warnings: Finding[];
}

export interface UpsertContext {
	districtId: number;
	batchId: string | null;
	actor: string;
	/** `check` mode: classify against the current records but write nothing. */
	dryRun: boolean;
	/**
	 * When given, the ids of changed records are added here instead of calling `afterRecordsChanged`: the
	 * caller (a batch writing many chunks in one transaction) calls it once for all of them before committing.
	 */
	deferChanges?: string[];
}

export interface UpsertResult {
	outcomes: Outcome[];
	/** Record ids (in input order; null for unchanged rows and dry runs). */
	recordIds: Array<string | null>;
}

/** Columns of `records` copied from the record (the full record is kept in `data`). */
type ColumnField =
	| 'practice_code'
	| 'county_fips'
	| 'installed_on'
	| 'status'
	| 'withdrawn_on'
	| 'extent_acres'
	| 'drainage_area_acres'
	| 'field_id'
	| 'operation_id'
	| 'huc12'
	| 'cost_total_usd'
	| 'cost_share_usd'
	| 'funding_program';

/** SHA-256 of the canonical JSON of a record (`records.content_hash`). */
export function contentHash(canonicalJson: string): string {
	return createHash('sha256').update(canonicalJson).digest('hex');
}

const text = (v: unknown): string | null => (v === null || v === undefined || v === '' ? null : String(v));

const districtLockKey = (districtId: number) => `runnel:district-records:${districtId}`;

/** Serialises writes per district, so two batches (or a batch and a PUT) never race on one local_id. */
export async function lockDistrictRecords(trx: Transaction<Database>, districtId: number): Promise<void> {
	await sql`select pg_advisory_xact_lock(hashtextextended(${districtLockKey(districtId)}, 0))`.execute(trx);
}

/** The same lock without waiting: false when another transaction writes this district's records. */
export async function tryLockDistrictRecords(trx: Transaction<Database>, districtId: number): Promise<boolean> {
	const r = await sql<{ ok: boolean }>`select pg_try_advisory_xact_lock(hashtextextended(${districtLockKey(districtId)}, 0)) as ok`.execute(
		trx
	);
	return r.rows[0].ok;
}

interface Prepared {
	localId: string;
	data: RecordData;
	/** The canonical JSON of `data`: hashed, and sent to the database as is. */
	json: string;
	hash: string;
	status: string;
	warnings: Finding[];
}

export async function upsertRecords(trx: Transaction<Database>, ctx: UpsertContext, items: IncomingRecord[]): Promise<UpsertResult> {
	const prepared: Prepared[] = items.map((it) => {
		const data = canonicalData(it.record);
		const json = JSON.stringify(data);
		return {
			localId: String(data.local_id),
			data,
			json,
			hash: contentHash(json),
			status: String(data.status ?? 'installed'),
			warnings: it.warnings
		};
	});
	const outcomes: Outcome[] = new Array(items.length);
	const recordIds: Array<string | null> = new Array(items.length).fill(null);
	if (prepared.length === 0) return { outcomes, recordIds };

	const localIds = prepared.map((p) => p.localId);
	const currentRows = await sql<{ id: string; local_id: string; version: number; content_hash: string; status: string }>`
		select id::text as id, local_id, version, content_hash, status from records
		where district_id = ${ctx.districtId} and local_id = any(${localIds}::text[])
		${ctx.dryRun ? sql`` : sql`for update`}`.execute(trx);
	const current = new Map(currentRows.rows.map((r) => [r.local_id, r]));

	const toCreate: number[] = [];
	const toUpdate: number[] = [];
	prepared.forEach((p, i) => {
		const cur = current.get(p.localId);
		if (!cur) {
			toCreate.push(i);
			outcomes[i] = p.status === 'withdrawn' ? 'withdrawn' : 'created';
		} else if (cur.content_hash === p.hash) {
			outcomes[i] = 'unchanged';
			recordIds[i] = cur.id;
		} else {
			toUpdate.push(i);
			outcomes[i] = p.status === 'withdrawn' && cur.status !== 'withdrawn' ? 'withdrawn' : 'updated';
			recordIds[i] = cur.id;
		}
	});
	if (ctx.dryRun || (toCreate.length === 0 && toUpdate.length === 0)) {
		if (ctx.dryRun) recordIds.fill(null);
		return { outcomes, recordIds };
	}

	const versionRows: Array<{ id: string; version: number; warnings: Finding[] }> = [];

	// Records and their versions are written by one statement per kind of change: the data-modifying
	// CTE inserts (or updates) the records and adds their version rows, parsing each record's JSON once.
	if (toCreate.length > 0) {
		const col = (f: ColumnField) => toCreate.map((i) => text(prepared[i].data[f]));
		const inserted = await sql<{ id: string; local_id: string }>`
			with u as (
				select * from unnest(
					${toCreate.map((i) => prepared[i].localId)}::text[], ${col('practice_code')}::text[], ${col('county_fips')}::text[],
					${col('installed_on')}::text[], ${col('status').map((s) => s ?? 'installed')}::text[], ${col('withdrawn_on')}::text[],
					${col('extent_acres')}::text[], ${col('drainage_area_acres')}::text[], ${col('field_id')}::text[], ${col('operation_id')}::text[],
					${col('huc12')}::text[], ${col('cost_total_usd')}::text[], ${col('cost_share_usd')}::text[], ${col('funding_program')}::text[],
					${toCreate.map((i) => prepared[i].json)}::text[], ${toCreate.map((i) => prepared[i].hash)}::text[],
					${toCreate.map((i) => Object.keys(prepared[i].data).sort().join(','))}::text[]
				) as u(local_id, practice_code, county_fips, installed_on, status, withdrawn_on, extent_acres, drainage_area_acres,
					field_id, operation_id, huc12, cost_total_usd, cost_share_usd, funding_program, data, content_hash, changed)
			), ins as (
				insert into records (district_id, local_id, version, practice_code, county_fips, installed_on, status, withdrawn_on,
					extent_acres, drainage_area_acres, field_id, operation_id, huc12, cost_total_usd, cost_share_usd, funding_program,
					data, content_hash)
				select ${ctx.districtId}, u.local_id, 1, u.practice_code, u.county_fips, u.installed_on::date, u.status, u.withdrawn_on::date,
					u.extent_acres::numeric, u.drainage_area_acres::numeric, u.field_id, u.operation_id, u.huc12,
					u.cost_total_usd::numeric, u.cost_share_usd::numeric, u.funding_program, u.data::jsonb, u.content_hash
				from u
				returning id, local_id, data
			), ver as (
				insert into record_versions (record_id, version, data, changed_fields, batch_id, actor)
				select ins.id, 1, ins.data, string_to_array(u.changed, ','), ${ctx.batchId}::bigint, ${ctx.actor}
				from ins join u on u.local_id = ins.local_id
			)
			select id::text as id, local_id from ins`.execute(trx);
		const ids = new Map(inserted.rows.map((r) => [r.local_id, r.id]));
		for (const i of toCreate) {
			const id = ids.get(prepared[i].localId)!;
			recordIds[i] = id;
			if (prepared[i].warnings.length > 0) versionRows.push({ id, version: 1, warnings: prepared[i].warnings });
		}
	}

	const updatedIds: string[] = [];
	if (toUpdate.length > 0) {
		const ids = toUpdate.map((i) => recordIds[i]!);
		const before = await sql<{ id: string; data: RecordData }>`
			select id::text as id, data from records where id = any(${ids}::bigint[])`.execute(trx);
		const beforeData = new Map(before.rows.map((r) => [r.id, r.data]));
		const col = (f: ColumnField) => toUpdate.map((i) => text(prepared[i].data[f]));
		const updated = await sql<{ id: string; version: number }>`
			with u as (
				select * from unnest(
					${ids}::bigint[], ${col('practice_code')}::text[], ${col('county_fips')}::text[], ${col('installed_on')}::text[],
					${col('status').map((s) => s ?? 'installed')}::text[], ${col('withdrawn_on')}::text[], ${col('extent_acres')}::text[],
					${col('drainage_area_acres')}::text[], ${col('field_id')}::text[], ${col('operation_id')}::text[], ${col('huc12')}::text[],
					${col('cost_total_usd')}::text[], ${col('cost_share_usd')}::text[], ${col('funding_program')}::text[],
					${toUpdate.map((i) => prepared[i].json)}::text[], ${toUpdate.map((i) => prepared[i].hash)}::text[],
					${toUpdate.map((i) => changedFields(beforeData.get(recordIds[i]!) ?? null, prepared[i].data).join(','))}::text[]
				) as u(id, practice_code, county_fips, installed_on, status, withdrawn_on, extent_acres, drainage_area_acres,
					field_id, operation_id, huc12, cost_total_usd, cost_share_usd, funding_program, data, content_hash, changed)
			), upd as (
				update records r set
					version = r.version + 1, practice_code = u.practice_code, county_fips = u.county_fips, installed_on = u.installed_on::date,
					status = u.status, withdrawn_on = u.withdrawn_on::date, extent_acres = u.extent_acres::numeric,
					drainage_area_acres = u.drainage_area_acres::numeric, field_id = u.field_id, operation_id = u.operation_id, huc12 = u.huc12,
					cost_total_usd = u.cost_total_usd::numeric, cost_share_usd = u.cost_share_usd::numeric, funding_program = u.funding_program,
					data = u.data::jsonb, content_hash = u.content_hash, updated_at = now()
				from u
				where r.id = u.id
				returning r.id, r.version, r.data
			), ver as (
				insert into record_versions (record_id, version, data, changed_fields, batch_id, actor)
				select upd.id, upd.version, upd.data, string_to_array(u.changed, ','), ${ctx.batchId}::bigint, ${ctx.actor}
				from upd join u on u.id = upd.id
			)
			select id::text as id, version from upd`.execute(trx);
		const versions = new Map(updated.rows.map((r) => [r.id, r.version]));
		for (const i of toUpdate) {
			const id = recordIds[i]!;
			updatedIds.push(id);
			versionRows.push({ id, version: versions.get(id)!, warnings: prepared[i].warnings });
		}
	}

	// The current warnings of each written record are those of its new version (new records have none yet).
	if (updatedIds.length > 0) await sql`delete from record_findings where record_id = any(${updatedIds}::bigint[])`.execute(trx);
	const warn = versionRows.flatMap((v) => v.warnings.map((w) => ({ id: v.id, version: v.version, w })));
	if (warn.length > 0) {
		await sql`
			insert into record_findings (record_id, version, code, severity, "column", value, rule, message, batch_id)
			select u.record_id, u.version, u.code, u.severity, u.col, u.value, u.rule::jsonb, u.message, ${ctx.batchId}::bigint
			from unnest(${warn.map((x) => x.id)}::bigint[], ${warn.map((x) => x.version)}::int[], ${warn.map((x) => x.w.code)}::text[],
				${warn.map((x) => x.w.severity)}::text[], ${warn.map((x) => x.w.column)}::text[], ${warn.map((x) => x.w.value)}::text[],
				${warn.map((x) => (x.w.rule ? JSON.stringify(x.w.rule) : null))}::text[], ${warn.map((x) => x.w.message)}::text[])
				as u(record_id, version, code, severity, col, value, rule, message)`.execute(trx);
	}

	const changed = recordIds.filter((id, i): id is string => id !== null && outcomes[i] !== 'unchanged');
	if (ctx.deferChanges) ctx.deferChanges.push(...changed);
	else await afterRecordsChanged(trx, changed);
	return { outcomes, recordIds };
}
