// The event checker's context on the server: the hub's today and the district's practice records
// (local id → practice code, install and withdrawal dates), read once per batch.
import type { Kysely, Transaction } from 'kysely';
import { todayIn } from '$lib/domain/calendar-date';
import type { EventCheckContext, KnownPractice } from '$lib/schema/check-events';
import type { Database } from '../db/schema';
import { hubTimeZone } from '../ingest/context';

export async function loadEventCheckContext(
	db: Kysely<Database> | Transaction<Database>,
	districtId: number,
	today?: string
): Promise<EventCheckContext> {
	const rows = await db
		.selectFrom('records')
		.select(['local_id', 'practice_code', 'installed_on', 'withdrawn_on'])
		.where('district_id', '=', districtId)
		.execute();
	const practices = new Map<string, KnownPractice>(
		rows.map((r) => [r.local_id, { practice_code: r.practice_code, installed_on: r.installed_on, withdrawn_on: r.withdrawn_on }])
	);
	return { today: today ?? todayIn(hubTimeZone()), practices };
}
