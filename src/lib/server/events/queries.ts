// Reading practice events: a record's timeline, and the bioreactors whose upkeep is overdue (the rule
// itself is src/lib/domain/upkeep.ts; this module only gathers its inputs).
import type { Kysely, Transaction } from 'kysely';
import { sql } from 'kysely';
import { practiceByCode } from '$lib/domain/practice-catalog';
import { isUpkeepOverdue, UPKEEP_OVERDUE_SETTING, upkeepDueBy, upkeepYearsOf } from '$lib/domain/upkeep';
import { BIOREACTOR_CODE } from '$lib/schema/practice-record';
import { BIOREACTOR_UPKEEP_KINDS } from '$lib/schema/practice-event';
import type { RecordEvent } from '$lib/schema/record-api';
import { readSetting } from '../db/settings';
import type { Database } from '../db/schema';

type Db = Kysely<Database> | Transaction<Database>;

/** One event on a record's timeline (the API shape: src/lib/schema/record-api.ts). */
export type TimelineEvent = RecordEvent;

/** A record's events, oldest first (the page's timeline). The caller has checked access to the record. */
export async function eventsOfRecord(db: Db, recordId: string): Promise<TimelineEvent[]> {
	const rows = await db
		.selectFrom('practice_events as e')
		.leftJoin('practice_event_versions as v', (j) => j.onRef('v.event_id', '=', 'e.id').onRef('v.version', '=', 'e.version'))
		.select(['e.id', 'e.event_on', 'e.kind', 'e.version', 'e.data', 'v.batch_id'])
		.where('e.record_id', '=', recordId)
		.orderBy('e.event_on', 'asc')
		.orderBy('e.kind', 'asc')
		.execute();
	return rows.map((r) => {
		const d = r.data as Record<string, unknown>;
		const num = (v: unknown) => (typeof v === 'number' ? v : null);
		const str = (v: unknown) => (typeof v === 'string' ? v : null);
		return {
			id: String(r.id),
			event_on: r.event_on,
			kind: r.kind,
			version: r.version,
			stop_board_height_in: num(d.stop_board_height_in),
			media_added_cu_yd: num(d.media_added_cu_yd),
			structure_id: str(d.structure_id),
			notes: str(d.notes),
			batch_id: r.batch_id ? String(r.batch_id) : null
		};
	});
}

/** The hub's upkeep interval for bioreactors, in years (setting `upkeep_overdue_years`, default 2). */
export async function upkeepOverdueYears(db: Db): Promise<number> {
	return upkeepYearsOf(await readSetting<unknown>(db, UPKEEP_OVERDUE_SETTING, null));
}

export interface OverdueBioreactor {
	record_id: string;
	local_id: string;
	district: { code: string; name: string };
	county_fips: string;
	installed_on: string;
	last_upkeep_on: string | null;
	due_by: string;
}

/** In-service bioreactors with no media top-up or inspection within `years` before `today`. */
export async function overdueBioreactors(
	db: Db,
	opts: { districtId: number | null; today: string; years: number }
): Promise<OverdueBioreactor[]> {
	let q = db
		.selectFrom('records as r')
		.innerJoin('districts as d', 'd.id', 'r.district_id')
		.select([
			'r.id',
			'r.local_id',
			'r.county_fips',
			'r.installed_on',
			'r.status',
			'r.withdrawn_on',
			'd.code',
			'd.name',
			sql<string | null>`(select max(e.event_on)::text from practice_events e
				where e.record_id = r.id and e.kind = any(${[...BIOREACTOR_UPKEEP_KINDS]}::text[]) and e.event_on <= ${opts.today}::date)`.as(
				'last_upkeep_on'
			)
		])
		.where('r.practice_code', '=', BIOREACTOR_CODE)
		.where('r.status', '=', 'installed');
	if (opts.districtId !== null) q = q.where('r.district_id', '=', opts.districtId);
	const rows = await q.orderBy('d.name').orderBy('r.local_id').execute();
	const lifespan = practiceByCode(BIOREACTOR_CODE)!.lifespan_years;
	return rows
		.filter((r) =>
			isUpkeepOverdue(
				{ installed_on: r.installed_on, status: r.status, withdrawn_on: r.withdrawn_on, last_upkeep_on: r.last_upkeep_on },
				opts.today,
				opts.years,
				lifespan
			)
		)
		.map((r) => ({
			record_id: String(r.id),
			local_id: r.local_id,
			district: { code: r.code, name: r.name },
			county_fips: r.county_fips,
			installed_on: r.installed_on,
			last_upkeep_on: r.last_upkeep_on,
			due_by: upkeepDueBy({ installed_on: r.installed_on, last_upkeep_on: r.last_upkeep_on }, opts.years)
		}));
}

/** Overdue counts by district (districts with none are left out). */
export function overdueByDistrict(list: OverdueBioreactor[]): Array<{ code: string; name: string; count: number }> {
	const m = new Map<string, { code: string; name: string; count: number }>();
	for (const b of list) {
		const e = m.get(b.district.code) ?? { ...b.district, count: 0 };
		e.count++;
		m.set(b.district.code, e);
	}
	return [...m.values()];
}
