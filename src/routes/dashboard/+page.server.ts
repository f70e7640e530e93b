// The dashboard shell: filter choices, the state's county shapes and the goal. The figures themselves are
// fetched by the page from /api/v1/rollups when the filters change.
import { getDb } from '$lib/server/db';
import { countyMapFor } from '$lib/server/rollups/county-shapes';
import { readSettings, SETTING_KEYS, stateFyStartMonthOf, stateGoalOf } from '$lib/server/rollups/settings';
import { fiscalYear } from '$lib/domain/fiscal-year';
import { DEFAULT_FY_SPAN } from '$lib/schema/rollups';
import { verificationSummary } from '$lib/server/verification/draws';
import { overdueBioreactors, overdueByDistrict, upkeepOverdueYears } from '$lib/server/events/queries';
import { hubTimeZone } from '$lib/server/ingest/context';
import { todayIn } from '$lib/domain/calendar-date';
import type { PageServerLoad } from './$types';

export const load = (async ({ locals }) => {
	const p = locals.principal!;
	const db = getDb();
	const settings = await readSettings(db, [SETTING_KEYS.hubStateFips, SETTING_KEYS.stateFyStartMonth, SETTING_KEYS.stateGoal]);
	const stateFips = String(settings.get(SETTING_KEYS.hubStateFips) ?? '19').padStart(2, '0');
	const startMonth = stateFyStartMonthOf(settings.get(SETTING_KEYS.stateFyStartMonth));
	let districtQuery = db.selectFrom('districts').select(['id', 'code', 'name']).orderBy('name');
	if (p.role === 'district') districtQuery = districtQuery.where('id', '=', p.districtId ?? -1);
	const [districts, practices, ownCounties] = await Promise.all([
		districtQuery.execute(),
		db.selectFrom('practices').select(['code', 'name']).orderBy('code').execute(),
		p.role === 'district'
			? db
					.selectFrom('district_counties')
					.select('county_fips')
					.where('district_id', '=', p.districtId ?? -1)
					.execute()
			: Promise.resolve([])
	]);
	const upkeepYears = await upkeepOverdueYears(db);
	const overdue = await overdueBioreactors(db, {
		districtId: p.role === 'district' ? (p.districtId ?? -1) : null,
		today: todayIn(hubTimeZone()),
		years: upkeepYears
	});
	const currentFy = fiscalYear(new Date().toISOString().slice(0, 10), 'state', startMonth);
	return {
		role: p.role,
		ownDistrict: p.role === 'district' ? (districts[0] ?? null) : null,
		ownCounties: ownCounties.map((c) => c.county_fips),
		districts,
		practices,
		map: countyMapFor(stateFips),
		goal: stateGoalOf(settings.get(SETTING_KEYS.stateGoal)),
		currentFy,
		defaultFrom: currentFy - DEFAULT_FY_SPAN + 1,
		startMonth,
		// Field verification: share verified working per district in the latest sample.
		verification: await verificationSummary(db, p),
		upkeep: { years: upkeepYears, byDistrict: overdueByDistrict(overdue) }
	};
}) satisfies PageServerLoad;
