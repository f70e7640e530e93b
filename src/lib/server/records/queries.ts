// Reading practice records: lists with filters and cursor pages, one record with its versions.
import { sql, type Kysely, type Transaction } from 'kysely';
import { z } from 'zod';
import { fiscalYearOf, fiscalYearRange } from '$lib/domain/fiscal-year-range';
import { diffVersions, type RecordData } from '$lib/domain/record-content';
import type { RecordDetail, RecordSummary } from '$lib/schema/record-api';
import type { Principal } from '../auth/principal';
import { getDb } from '../db';
import type { Database } from '../db/schema';
import { stateFyStartMonth } from '../db/settings';
import { decodeCursor, toPage, type Page } from '../http/cursor';
import { ApiError } from '../http/problem';
import { eventsOfRecord } from '../events/queries';
import { upkeepStatusOf } from '../events/upkeep';
import { canReadDistrict, readableDistrictId } from './access';
import { recordEstimates } from './estimates';

type Db = Kysely<Database> | Transaction<Database>;

export interface RecordFilters {
	district: string | null;
	county: string | null;
	practice: string | null;
	fiscalYear: number | null;
	status: 'installed' | 'withdrawn' | null;
	localId: string | null;
}

const num = (v: string | null) => (v === null ? null : Number(v));

function baseQuery(db: Db) {
	return db
		.selectFrom('records as r')
		.innerJoin('districts as d', 'd.id', 'r.district_id')
		.select([
			'r.id',
			'r.district_id',
			'd.code as district_code',
			'd.name as district_name',
			'r.local_id',
			'r.version',
			'r.status',
			'r.practice_code',
			'r.county_fips',
			'r.installed_on',
			'r.withdrawn_on',
			'r.extent_acres',
			'r.drainage_area_acres',
			'r.field_id',
			'r.operation_id',
			'r.huc12',
			'r.cost_total_usd',
			'r.cost_share_usd',
			'r.funding_program',
			'r.updated_at',
			sql<number>`(select count(*)::int from record_findings f where f.record_id = r.id and f.version = r.version)`.as('warnings')
		]);
}

type Row = Awaited<ReturnType<ReturnType<typeof baseQuery>['execute']>>[number];

function summary(r: Row, fyStart: number): RecordSummary {
	return {
		id: String(r.id),
		district: { code: r.district_code, name: r.district_name },
		local_id: r.local_id,
		version: r.version,
		status: r.status,
		practice_code: r.practice_code,
		county_fips: r.county_fips.trim(),
		installed_on: r.installed_on,
		withdrawn_on: r.withdrawn_on,
		fiscal_year: fiscalYearOf(r.installed_on, fyStart),
		extent_acres: num(r.extent_acres),
		drainage_area_acres: num(r.drainage_area_acres),
		field_id: r.field_id,
		operation_id: r.operation_id,
		huc12: r.huc12?.trim() ?? null,
		cost_total_usd: num(r.cost_total_usd),
		cost_share_usd: num(r.cost_share_usd),
		funding_program: r.funding_program,
		warnings: r.warnings,
		updated_at: new Date(r.updated_at).toISOString(),
		links: { self: `/api/v1/records/${r.id}` }
	};
}

const RecordCursor = z.object({ id: z.string().regex(/^[0-9]{1,18}$/) });

export async function listRecords(principal: Principal, url: URL, filters: RecordFilters, limit: number): Promise<Page<RecordSummary>> {
	const db = getDb();
	const districtId = await readableDistrictId(db, principal, filters.district);
	const fyStart = await stateFyStartMonth(db);
	const cursor = decodeCursor(url.searchParams.get('cursor'), RecordCursor);
	let q = baseQuery(db);
	if (districtId !== null) q = q.where('r.district_id', '=', districtId);
	if (filters.county) q = q.where('r.county_fips', '=', filters.county);
	if (filters.practice) q = q.where('r.practice_code', '=', filters.practice);
	if (filters.status) q = q.where('r.status', '=', filters.status);
	if (filters.localId) q = q.where('r.local_id', '=', filters.localId);
	if (filters.fiscalYear !== null) {
		const { start, endExclusive } = fiscalYearRange(filters.fiscalYear, fyStart);
		q = q.where('r.installed_on', '>=', start).where('r.installed_on', '<', endExclusive);
	}
	if (cursor) q = q.where('r.id', '<', cursor.id);
	const rows = await q
		.orderBy('r.id', 'desc')
		.limit(limit + 1)
		.execute();
	return toPage(
		url,
		rows,
		limit,
		(r) => ({ id: String(r.id) }),
		(r) => summary(r, fyStart)
	);
}

function notFound(): ApiError {
	return new ApiError({ status: 404, type: 'record-not-found', detail: 'There is no such record that you can see.' });
}

/**
 * One record with its current warnings, every version (newest first), its stored estimates with the active
 * method's breakdown, its upkeep events and, for bioreactors, the design screening and the upkeep status — for a
 * principal that may see it.
 */
export async function recordDetail(db: Db, principal: Principal, id: string): Promise<RecordDetail> {
	if (!/^[1-9][0-9]{0,17}$/.test(id)) throw notFound();
	const row = await baseQuery(db).select('r.data').where('r.id', '=', id).executeTakeFirst();
	if (!row || !canReadDistrict(principal, row.district_id)) throw notFound();
	const fyStart = await stateFyStartMonth(db);
	const versions = await db
		.selectFrom('record_versions as v')
		.leftJoin('batches as b', 'b.id', 'v.batch_id')
		.select(['v.version', 'v.created_at', 'v.actor', 'v.changed_fields', 'v.data', 'v.batch_id', 'b.file_name', 'b.mode'])
		.where('v.record_id', '=', id)
		.orderBy('v.version', 'asc')
		.execute();
	const findings = await db
		.selectFrom('record_findings')
		.select(['code', 'severity', 'column', 'value', 'rule', 'message'])
		.where('record_id', '=', id)
		.where('version', '=', row.version)
		.execute();
	const views = versions.map((v, i) => ({
		version: v.version,
		created_at: new Date(v.created_at).toISOString(),
		actor: v.actor,
		batch: v.batch_id ? { id: String(v.batch_id), file_name: v.file_name ?? null, mode: v.mode ?? '' } : null,
		changed_fields: v.changed_fields,
		changes: diffVersions(i > 0 ? (versions[i - 1].data as RecordData) : null, v.data as RecordData),
		data: v.data as Record<string, unknown>
	}));
	const events = await eventsOfRecord(db, String(row.id));
	return {
		...summary(row, fyStart),
		data: row.data as Record<string, unknown>,
		current_findings: findings.map((f) => ({ ...f, rule: f.rule ?? null })),
		versions: views.reverse(),
		...(await recordEstimates(db, String(row.id), row.practice_code, row.data as Record<string, unknown>)),
		events,
		upkeep: await upkeepStatusOf(db, row, events)
	};
}

export async function recordIdByLocalId(db: Db, districtId: number, localId: string): Promise<string | undefined> {
	const r = await db
		.selectFrom('records')
		.select('id')
		.where('district_id', '=', districtId)
		.where('local_id', '=', localId)
		.executeTakeFirst();
	return r?.id;
}
