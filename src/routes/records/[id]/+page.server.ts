import { error } from '@sveltejs/kit';
import { getDb } from '$lib/server/db';
import { ApiError } from '$lib/server/http/problem';
import { recordDetail } from '$lib/server/records/queries';
import { reviewHistory, reviewStatusOf } from '$lib/server/reviews/queue';
import { eventsOfRecord, upkeepOverdueYears } from '$lib/server/events/queries';
import { todayIn } from '$lib/domain/calendar-date';
import { practiceByCode } from '$lib/domain/practice-catalog';
import { isUpkeepOverdue, upkeepDueBy } from '$lib/domain/upkeep';
import { hubTimeZone } from '$lib/server/ingest/context';
import { BIOREACTOR_CODE } from '$lib/schema/practice-record';
import { BIOREACTOR_UPKEEP_KINDS } from '$lib/schema/practice-event';
import type { PageServerLoad } from './$types';

export const load = (async ({ locals, params }) => {
	try {
		const record = await recordDetail(getDb(), locals.principal!, params.id);
		const county = await getDb().selectFrom('counties').select('name').where('fips', '=', record.county_fips).executeTakeFirst();
		// Reviews: the record's place in the review queue and every decision on it.
		const [reviews, reviewStatus, events] = await Promise.all([
			reviewHistory(getDb(), record.id),
			reviewStatusOf(getDb(), record.id),
			eventsOfRecord(getDb(), record.id)
		]);
		// Bioreactors: when upkeep (a media top-up or an inspection) is next due, and whether it is overdue.
		let upkeep: { years: number; last_upkeep_on: string | null; due_by: string; overdue: boolean } | null = null;
		if (record.practice_code === BIOREACTOR_CODE) {
			const today = todayIn(hubTimeZone());
			const years = await upkeepOverdueYears(getDb());
			const last = events.filter((e) => BIOREACTOR_UPKEEP_KINDS.includes(e.kind) && e.event_on <= today).at(-1)?.event_on ?? null;
			const subject = { installed_on: record.installed_on, status: record.status, withdrawn_on: record.withdrawn_on, last_upkeep_on: last };
			upkeep = {
				years,
				last_upkeep_on: last,
				due_by: upkeepDueBy(subject, years),
				overdue: isUpkeepOverdue(subject, today, years, practiceByCode(BIOREACTOR_CODE)!.lifespan_years)
			};
		}
		return { record, countyName: county?.name ?? null, reviews, reviewStatus, events, upkeep };
	} catch (e) {
		if (e instanceof ApiError && e.init.status === 404) error(404, 'No such record');
		throw e;
	}
}) satisfies PageServerLoad;
