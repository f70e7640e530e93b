// The bioreactors whose upkeep is overdue (linked from the dashboard's "Upkeep overdue" warning).
import { error } from '@sveltejs/kit';
import { todayIn } from '$lib/domain/calendar-date';
import { getDb } from '$lib/server/db';
import { overdueBioreactors, upkeepOverdueYears } from '$lib/server/events/queries';
import { hubTimeZone } from '$lib/server/ingest/context';
import type { PageServerLoad } from './$types';

export const load = (async ({ locals, url }) => {
	const p = locals.principal!;
	const db = getDb();
	const code = url.searchParams.get('district');
	let districtId: number | null = null;
	let district: { code: string; name: string } | null = null;
	if (p.role === 'district') {
		const own = await db
			.selectFrom('districts')
			.select(['id', 'code', 'name'])
			.where('id', '=', p.districtId ?? -1)
			.executeTakeFirst();
		if (!own || (code && code !== own.code)) error(404, 'No such district');
		districtId = own.id;
		district = { code: own.code, name: own.name };
	} else if (code) {
		const d = await db.selectFrom('districts').select(['id', 'code', 'name']).where('code', '=', code).executeTakeFirst();
		if (!d) error(404, 'No such district');
		districtId = d.id;
		district = { code: d.code, name: d.name };
	}
	const today = todayIn(hubTimeZone());
	const years = await upkeepOverdueYears(db);
	return { district, today, years, list: await overdueBioreactors(db, { districtId, today, years }) };
}) satisfies PageServerLoad;
