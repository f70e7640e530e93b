// Test scenarios for the rollups: districts, tokens and practice records written straight to the tables,
// each write in a transaction that calls `afterRecordsChanged` — what the intake pipeline does.
import { createHash } from 'node:crypto';
import { sql, type Kysely } from 'kysely';
import type { Database } from '$lib/server/db/schema';
import { afterRecordsChanged } from '$lib/server/records/changes';
import { hashToken } from '$lib/server/auth/tokens';
import { ROLE_SCOPES, type Role } from '$lib/domain/scopes';

export interface TestRecord {
	local_id: string;
	practice_code: string;
	county_fips: string;
	installed_on: string;
	status?: 'installed' | 'withdrawn';
	withdrawn_on?: string | null;
	extent_acres?: number | null;
	drainage_area_acres?: number | null;
	field_id?: string | null;
	operation_id?: string | null;
	huc12?: string | null;
	cost_total_usd?: number | null;
	cost_share_usd?: number | null;
	funding_program?: string | null;
}

export async function createDistrict(
	db: Kysely<Database>,
	code: string,
	name: string,
	region: string,
	counties: string[]
): Promise<number> {
	const row = await db
		.insertInto('districts')
		.values({ code, name, region, contacts: JSON.stringify([]) })
		.onConflict((oc) => oc.column('code').doUpdateSet({ name, region }))
		.returning('id')
		.executeTakeFirstOrThrow();
	if (counties.length) {
		await db
			.insertInto('district_counties')
			.values(counties.map((c) => ({ district_id: row.id, county_fips: c })))
			.onConflict((oc) => oc.columns(['district_id', 'county_fips']).doNothing())
			.execute();
	}
	return row.id;
}

/** A user of the role with an API token carrying all the role's scopes; returns the token. */
export async function createTokenUser(
	db: Kysely<Database>,
	email: string,
	role: Role,
	districtId: number | null,
	token: string
): Promise<string> {
	const user = await db
		.insertInto('users')
		.values({ email, name: `Test ${role}`, role, district_id: districtId, password_hash: null })
		.onConflict((oc) => oc.expression(sql`lower(email)`).doUpdateSet({ district_id: districtId }))
		.returning('id')
		.executeTakeFirstOrThrow();
	await db
		.insertInto('api_tokens')
		.values({
			user_id: user.id,
			name: 'test',
			token_hash: hashToken(token),
			display_prefix: token.slice(0, 8),
			scopes: [...ROLE_SCOPES[role]]
		})
		.onConflict((oc) => oc.column('token_hash').doNothing())
		.execute();
	return token;
}

function rowOf(districtId: number, r: TestRecord, version: number) {
	const data = { ...r };
	return {
		district_id: districtId,
		local_id: r.local_id,
		version,
		practice_code: r.practice_code,
		county_fips: r.county_fips,
		installed_on: r.installed_on,
		status: r.status ?? 'installed',
		withdrawn_on: r.withdrawn_on ?? null,
		extent_acres: r.extent_acres ?? null,
		drainage_area_acres: r.drainage_area_acres ?? null,
		field_id: r.field_id ?? null,
		operation_id: r.operation_id ?? null,
		huc12: r.huc12 ?? null,
		cost_total_usd: r.cost_total_usd ?? null,
		cost_share_usd: r.cost_share_usd ?? null,
		funding_program: r.funding_program ?? null,
		data: JSON.stringify(data),
		content_hash: createHash('sha256').update(JSON.stringify(data)).digest('hex')
	};
}

/** Inserts records of one district in one transaction and refreshes derived data; returns their ids in order. */
export async function insertRecords(db: Kysely<Database>, districtId: number, records: TestRecord[]): Promise<string[]> {
	if (records.length === 0) return [];
	return db.transaction().execute(async (trx) => {
		const ids: string[] = [];
		for (let i = 0; i < records.length; i += 1000) {
			const rows = await trx
				.insertInto('records')
				.values(records.slice(i, i + 1000).map((r) => rowOf(districtId, r, 1)))
				.returning(['id', 'data'])
				.execute();
			await trx
				.insertInto('record_versions')
				.values(
					rows.map((r) => ({
						record_id: r.id,
						version: 1,
						data: JSON.stringify(r.data),
						changed_fields: [],
						batch_id: null,
						actor: 'test'
					}))
				)
				.execute();
			ids.push(...rows.map((r) => String(r.id)));
		}
		await afterRecordsChanged(trx, ids);
		return ids;
	});
}

/** Changes records (a new version each) in one transaction and refreshes derived data. */
export async function updateRecords(db: Kysely<Database>, changes: Array<{ id: string; set: Partial<TestRecord> }>): Promise<void> {
	await db.transaction().execute(async (trx) => {
		for (const c of changes) {
			const cur = await trx.selectFrom('records').selectAll().where('id', '=', c.id).executeTakeFirstOrThrow();
			const merged = { ...(cur.data as unknown as TestRecord), ...c.set };
			const row = rowOf(cur.district_id, merged, cur.version + 1);
			await trx
				.updateTable('records')
				.set({ ...row, updated_at: sql`now()` as unknown as Date })
				.where('id', '=', c.id)
				.execute();
			await trx
				.insertInto('record_versions')
				.values({
					record_id: c.id,
					version: cur.version + 1,
					data: row.data,
					changed_fields: Object.keys(c.set),
					batch_id: null,
					actor: 'test'
				})
				.execute();
		}
		await afterRecordsChanged(
			trx,
			changes.map((c) => c.id)
		);
	});
}

export async function withdrawRecords(db: Kysely<Database>, ids: string[], on: string): Promise<void> {
	await updateRecords(
		db,
		ids.map((id) => ({ id, set: { status: 'withdrawn', withdrawn_on: on } }))
	);
}
