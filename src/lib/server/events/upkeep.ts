// A record's upkeep status (bioreactors): when a media top-up or an inspection is next due and whether it
// is overdue today. The rule is src/lib/domain/upkeep.ts; this gathers its inputs (the hub's today, the
// interval setting, the record's events). The record page and GET /api/v1/records/{id} both use it.
import type { Kysely, Transaction } from 'kysely';
import { todayIn } from '$lib/domain/calendar-date';
import { practiceByCode } from '$lib/domain/practice-catalog';
import { isUpkeepOverdue, upkeepDueBy } from '$lib/domain/upkeep';
import type { RecordEvent, UpkeepStatus } from '$lib/schema/record-api';
import { BIOREACTOR_CODE } from '$lib/schema/practice-record';
import { BIOREACTOR_UPKEEP_KINDS } from '$lib/schema/practice-event';
import type { Database } from '../db/schema';
import { hubTimeZone } from '../ingest/context';
import { upkeepOverdueYears } from './queries';

type Db = Kysely<Database> | Transaction<Database>;

export interface UpkeepRecord {
	practice_code: string;
	installed_on: string;
	status: 'installed' | 'withdrawn';
	withdrawn_on: string | null;
}

/**
 * The upkeep status of a bioreactor given its events (oldest first); null for any other practice.
 * `today` defaults to the hub's today.
 */
export async function upkeepStatusOf(
	db: Db,
	record: UpkeepRecord,
	events: readonly Pick<RecordEvent, 'kind' | 'event_on'>[],
	today: string = todayIn(hubTimeZone())
): Promise<UpkeepStatus | null> {
	if (record.practice_code !== BIOREACTOR_CODE) return null;
	const years = await upkeepOverdueYears(db);
	const last = events.filter((e) => BIOREACTOR_UPKEEP_KINDS.includes(e.kind) && e.event_on <= today).at(-1)?.event_on ?? null;
	const subject = { installed_on: record.installed_on, status: record.status, withdrawn_on: record.withdrawn_on, last_upkeep_on: last };
	return {
		years,
		last_upkeep_on: last,
		due_by: upkeepDueBy(subject, years),
		overdue: isUpkeepOverdue(subject, today, years, practiceByCode(BIOREACTOR_CODE)!.lifespan_years)
	};
}
