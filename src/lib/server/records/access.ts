// Which district a principal may write to and read from. A district principal only ever sees its own
// district; the state roles (manager, admin) see every district; an admin writing must name one.
import type { Kysely, Transaction } from 'kysely';
import type { Principal } from '../auth/principal';
import type { Database } from '../db/schema';
import { ApiError } from '../http/problem';

export interface DistrictRef {
	id: number;
	code: string;
	name: string;
}

async function districtByCode(db: Kysely<Database> | Transaction<Database>, code: string): Promise<DistrictRef | undefined> {
	return db.selectFrom('districts').select(['id', 'code', 'name']).where('code', '=', code).executeTakeFirst();
}

export async function districtById(db: Kysely<Database> | Transaction<Database>, id: number): Promise<DistrictRef> {
	return db.selectFrom('districts').select(['id', 'code', 'name']).where('id', '=', id).executeTakeFirstOrThrow();
}

/** The district a write goes to: the principal's own, or (admin only) the one named by `code`. */
export async function writableDistrict(db: Kysely<Database>, principal: Principal, code: string | null): Promise<DistrictRef> {
	if (principal.role === 'district') {
		if (principal.districtId === null) throw new ApiError({ status: 403, detail: 'Your account is not bound to a district.' });
		const own = await districtById(db, principal.districtId);
		if (code && code !== own.code)
			throw new ApiError({
				status: 403,
				type: 'other-district',
				detail: `You report for ${own.code}; you cannot write records of district ${code}.`
			});
		return own;
	}
	if (principal.role === 'admin') {
		if (!code)
			throw new ApiError({
				status: 400,
				type: 'district-required',
				detail: 'An administrator must name the district the records belong to (`district=CODE`).',
				errors: [{ pointer: '#/query/district', detail: 'required for administrators' }]
			});
		const d = await districtByCode(db, code);
		if (!d)
			throw new ApiError({
				status: 422,
				type: 'unknown-district',
				detail: `No district has the code ${code}.`,
				errors: [{ pointer: '#/query/district', detail: 'unknown district code' }]
			});
		return d;
	}
	throw new ApiError({ status: 403, detail: 'Only district staff and administrators send practice records.' });
}

/**
 * The district filter for reads: a district principal is pinned to its own district (asking for another
 * is a 403); other roles may filter by `code` or see all. Returns null for "all districts".
 */
export async function readableDistrictId(db: Kysely<Database>, principal: Principal, code: string | null): Promise<number | null> {
	if (principal.role === 'district') {
		if (principal.districtId === null) throw new ApiError({ status: 403, detail: 'Your account is not bound to a district.' });
		if (code) {
			const own = await districtById(db, principal.districtId);
			if (code !== own.code) throw new ApiError({ status: 403, type: 'other-district', detail: `You may only read district ${own.code}.` });
		}
		return principal.districtId;
	}
	if (!code) return null;
	const d = await districtByCode(db, code);
	if (!d)
		throw new ApiError({
			status: 400,
			type: 'unknown-district',
			detail: `No district has the code ${code}.`,
			errors: [{ pointer: '#/query/district', detail: 'unknown district code' }]
		});
	return d.id;
}

/** True when the principal may see rows of this district (used for single resources: else 404). */
export function canReadDistrict(principal: Principal, districtId: number): boolean {
	return principal.role !== 'district' || principal.districtId === districtId;
}
