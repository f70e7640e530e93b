// Districts: name, region, the counties they serve (counties of the hub's state), contacts and
// whether they are mailed about rejected rows.
import type { Kysely } from 'kysely';
import type { DistrictUpdate } from '$lib/schema/accounts';
import type { Database, DistrictContact } from '../db/schema';
import type { Principal } from '../auth/principal';
import { recordAudit } from './audit';

type Db = Kysely<Database>;

export interface DistrictSummary {
	id: number;
	code: string;
	name: string;
	region: string;
	counties: Array<{ fips: string; name: string }>;
	contacts: DistrictContact[];
	notifyOnRejected: boolean;
	users: number;
}

/** The state the hub serves (settings.hub_state_fips, seeded from HUB_STATE_FIPS). */
export async function hubStateFips(db: Db): Promise<string> {
	const row = await db.selectFrom('settings').select('value').where('key', '=', 'hub_state_fips').executeTakeFirst();
	return typeof row?.value === 'string' ? row.value : '19';
}

export async function hubCounties(db: Db): Promise<Array<{ fips: string; name: string }>> {
	const state = await hubStateFips(db);
	return db.selectFrom('counties').select(['fips', 'name']).where('state_fips', '=', state).orderBy('name').execute();
}

export async function listDistricts(db: Db, opts: { onlyId?: number | null; code?: string } = {}): Promise<DistrictSummary[]> {
	let q = db
		.selectFrom('districts as d')
		.select((eb) => [
			'd.id',
			'd.code',
			'd.name',
			'd.region',
			'd.contacts',
			'd.notify_on_rejected',
			eb
				.selectFrom('users as u')
				.whereRef('u.district_id', '=', 'd.id')
				.where('u.active', '=', true)
				.select(eb.fn.countAll<string>().as('n'))
				.as('users')
		]);
	if (opts.onlyId !== undefined && opts.onlyId !== null) q = q.where('d.id', '=', opts.onlyId);
	if (opts.code !== undefined) q = q.where('d.code', '=', opts.code);
	const rows = await q.orderBy('d.name').execute();
	const ids = rows.map((r) => r.id);
	const counties =
		ids.length === 0
			? []
			: await db
					.selectFrom('district_counties as dc')
					.innerJoin('counties as c', 'c.fips', 'dc.county_fips')
					.select(['dc.district_id', 'c.fips', 'c.name'])
					.where('dc.district_id', 'in', ids)
					.orderBy('c.name')
					.execute();
	return rows.map((r) => ({
		id: r.id,
		code: r.code,
		name: r.name,
		region: r.region,
		contacts: r.contacts,
		notifyOnRejected: r.notify_on_rejected,
		users: Number(r.users ?? 0),
		counties: counties.filter((c) => c.district_id === r.id).map((c) => ({ fips: c.fips, name: c.name }))
	}));
}

export async function getDistrict(db: Db, id: number): Promise<DistrictSummary | null> {
	return (await listDistricts(db, { onlyId: id }))[0] ?? null;
}

export async function districtIdByCode(db: Db, code: string): Promise<number | null> {
	const r = await db.selectFrom('districts').select('id').where('code', '=', code.toUpperCase()).executeTakeFirst();
	return r?.id ?? null;
}

export async function createDistrict(
	db: Db,
	input: { code: string; name: string; region: string },
	actor: Principal,
	ip: string | null
): Promise<{ ok: true; id: number } | { ok: false; field: string; message: string }> {
	try {
		const id = await db.transaction().execute(async (trx) => {
			const r = await trx
				.insertInto('districts')
				.values({ code: input.code, name: input.name, region: input.region })
				.returning('id')
				.executeTakeFirstOrThrow();
			await recordAudit(trx, { action: 'district-created', actor, ip, detail: { district: r.id, code: input.code, name: input.name } });
			return r.id;
		});
		return { ok: true, id };
	} catch (e) {
		if ((e as { code?: string }).code === '23505') return { ok: false, field: 'code', message: 'Another district already uses this code.' };
		throw e;
	}
}

/** Replaces a district's details and counties. Counties must belong to the hub's state. */
export async function updateDistrict(
	db: Db,
	id: number,
	input: DistrictUpdate,
	actor: Principal,
	ip: string | null
): Promise<{ ok: true } | { ok: false; field: string; message: string }> {
	const before = await getDistrict(db, id);
	if (!before) return { ok: false, field: '_form', message: 'There is no such district.' };
	const allowed = new Set((await hubCounties(db)).map((c) => c.fips));
	const counties = [...new Set(input.counties)];
	const foreign = counties.filter((c) => !allowed.has(c));
	if (foreign.length > 0) return { ok: false, field: 'counties', message: `Not a county of this hub's state: ${foreign.join(', ')}.` };
	await db.transaction().execute(async (trx) => {
		await trx
			.updateTable('districts')
			.set({
				name: input.name,
				region: input.region,
				contacts: JSON.stringify(input.contacts),
				notify_on_rejected: input.notify_on_rejected
			})
			.where('id', '=', id)
			.execute();
		await trx.deleteFrom('district_counties').where('district_id', '=', id).execute();
		if (counties.length > 0) {
			await trx
				.insertInto('district_counties')
				.values(counties.map((c) => ({ district_id: id, county_fips: c })))
				.execute();
		}
		const beforeFips = before.counties.map((c) => c.fips);
		await recordAudit(trx, {
			action: 'district-updated',
			actor,
			ip,
			detail: {
				district: id,
				code: before.code,
				...(before.name !== input.name ? { name: { from: before.name, to: input.name } } : {}),
				counties_added: counties.filter((c) => !beforeFips.includes(c)),
				counties_removed: beforeFips.filter((c) => !counties.includes(c)),
				contacts: input.contacts.length,
				notify_on_rejected: input.notify_on_rejected
			}
		});
	});
	return { ok: true };
}
