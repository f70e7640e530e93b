import { getDb } from '$lib/server/db';
import type { PageServerLoad } from './$types';

export const load = (async ({ locals }) => {
	const p = locals.principal!;
	const db = getDb();
	const own = p.role === 'district' ? p.districtId : null;
	let dq = db.selectFrom('districts').select(['id', 'code', 'name']).orderBy('name');
	if (own !== null) dq = dq.where('id', '=', own);
	const districts = await dq.execute();
	let cq = db
		.selectFrom('district_counties as dc')
		.innerJoin('counties as c', 'c.fips', 'dc.county_fips')
		.select(['c.fips', 'c.name'])
		.distinct()
		.orderBy('c.name');
	if (own !== null) cq = cq.where('dc.district_id', '=', own);
	const counties = (await cq.execute()).map((c) => ({ fips: c.fips.trim(), name: c.name }));
	return { districts: districts.map((d) => ({ code: d.code, name: d.name })), counties, pinnedDistrict: own !== null };
}) satisfies PageServerLoad;
