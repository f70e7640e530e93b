// Builds the checker's context on the server: the hub's state (settings), the district's counties,
// the hub's today and the state's county shapes. The CLI builds the same context offline with
// `offlineCheckContext` (no district: the served-county check is skipped).
import type { Kysely } from 'kysely';
import type { CheckContext } from '../../schema/check-records';
import { todayIn } from '../../domain/calendar-date';
import type { Database } from '../db/schema';
import { stateCountyCodes, stateCountyShapes } from './reference';

/** The time zone "today" is taken in for the not-in-the-future rule (env HUB_TIME_ZONE). */
export function hubTimeZone(): string {
	return process.env.HUB_TIME_ZONE || 'America/Chicago';
}

/** The hub's state FIPS code from the settings table (seeded from HUB_STATE_FIPS, default 19). */
export async function hubStateFips(db: Kysely<Database>): Promise<string> {
	const row = await db.selectFrom('settings').select('value').where('key', '=', 'hub_state_fips').executeTakeFirst();
	const v = row?.value;
	const s = typeof v === 'string' ? v : typeof v === 'number' ? String(v) : '19';
	return s.padStart(2, '0');
}

export async function districtCountySet(db: Kysely<Database>, districtId: number): Promise<Set<string>> {
	const rows = await db.selectFrom('district_counties').select('county_fips').where('district_id', '=', districtId).execute();
	return new Set(rows.map((r) => r.county_fips));
}

export function offlineCheckContext(opts: {
	stateFips: string;
	districtCounties?: ReadonlySet<string> | null;
	today?: string;
	designChecks?: CheckContext['designChecks'];
}): CheckContext {
	return {
		stateFips: opts.stateFips,
		districtCounties: opts.districtCounties ?? null,
		today: opts.today ?? todayIn(hubTimeZone()),
		countyShapes: stateCountyShapes(opts.stateFips),
		stateCounties: stateCountyCodes(opts.stateFips),
		designChecks: opts.designChecks
	};
}

/** The context for checking an upload of one district (null: no district, skip the served-county rule). */
export async function loadCheckContext(
	db: Kysely<Database>,
	opts: { districtId: number | null; today?: string; designChecks?: CheckContext['designChecks'] }
): Promise<CheckContext> {
	const stateFips = await hubStateFips(db);
	const districtCounties = opts.districtId === null ? null : await districtCountySet(db, opts.districtId);
	return offlineCheckContext({ stateFips, districtCounties, today: opts.today, designChecks: opts.designChecks });
}
