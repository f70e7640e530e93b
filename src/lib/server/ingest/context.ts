// Builds the checker's context on the server: the hub's state (settings), the district's counties,
// the hub's today and the state's county shapes. The CLI builds the same context offline with
// `offlineCheckContext` (no district: the served-county check is skipped).
//
// Both wire the bioreactor design screening (domain/bioreactor-screening.ts) into the checker's
// `designChecks` hook, with the parameters of a reduction method: the hub's active method on the server,
// the built-in default method (or one the CLI fetched from the hub) offline. One place builds the hook,
// so a batch, a single-record PUT and `runnel check` screen the same way.
import type { Kysely } from 'kysely';
import type { CheckContext } from '../../schema/check-records';
import { bioreactorDesignChecks } from '../../domain/bioreactor-screening';
import { todayIn } from '../../domain/calendar-date';
import { DEFAULT_METHOD, type ReductionMethod } from '../../domain/reduction-method';
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

/** The design checks run on every valid record: bioreactor (605) screening with a method's parameters. */
export function designChecksFor(method: ReductionMethod): NonNullable<CheckContext['designChecks']> {
	return (record) => bioreactorDesignChecks(record, { method });
}

export function offlineCheckContext(opts: {
	stateFips: string;
	districtCounties?: ReadonlySet<string> | null;
	today?: string;
	/** The method whose screening parameters the design checks use (default: the built-in default method). */
	method?: ReductionMethod;
	/** Replaces the design checks; `null` turns them off. */
	designChecks?: CheckContext['designChecks'] | null;
}): CheckContext {
	return {
		stateFips: opts.stateFips,
		districtCounties: opts.districtCounties ?? null,
		today: opts.today ?? todayIn(hubTimeZone()),
		countyShapes: stateCountyShapes(opts.stateFips),
		stateCounties: stateCountyCodes(opts.stateFips),
		designChecks: opts.designChecks === null ? undefined : (opts.designChecks ?? designChecksFor(opts.method ?? DEFAULT_METHOD))
	};
}

/** The context for checking an upload of one district (null: no district, skip the served-county rule). */
export async function loadCheckContext(
	db: Kysely<Database>,
	opts: { districtId: number | null; today?: string; designChecks?: CheckContext['designChecks'] | null }
): Promise<CheckContext> {
	const stateFips = await hubStateFips(db);
	const districtCounties = opts.districtId === null ? null : await districtCountySet(db, opts.districtId);
	// The hub's active reduction method (its bioreactor parameters: minimum retention, design share, porosity).
	// Imported when needed: the CLI loads this module through tsx, which does not resolve `$lib` (methods.ts uses it).
	const method = opts.designChecks === undefined ? await (await import('../methods')).getActiveMethod(db) : undefined;
	return offlineCheckContext({ stateFips, districtCounties, today: opts.today, method, designChecks: opts.designChecks });
}
