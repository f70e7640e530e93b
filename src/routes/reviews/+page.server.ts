// The review queue for the state program manager: flagged records with filters, each with its warnings,
// design screening and version history side by side, and the decision form.
import { fail } from '@sveltejs/kit';
import { hasScreeningData, screenBioreactor, BIOREACTOR_CODE, type BioreactorFields } from '$lib/domain/bioreactor-screening';
import { PRACTICE_CODES } from '$lib/domain/practice-catalog';
import { REVIEW_STATUSES, ReviewDecisionInput } from '$lib/schema/reviews';
import { getDb } from '$lib/server/db';
import { fieldErrors } from '$lib/server/http/forms';
import { ApiError } from '$lib/server/http/problem';
import { recordDetail } from '$lib/server/records/queries';
import { decideReview, listReviews, reviewHistory, type ReviewFilters } from '$lib/server/reviews/queue';
import { activeMethodVersion, loadMethod } from '$lib/server/rollups/method-source';
import type { Actions, PageServerLoad } from './$types';

const PAGE_SIZE = 20;

function filtersOf(url: URL): { filters: ReviewFilters; problems: string[] } {
	const q = url.searchParams;
	const problems: string[] = [];
	const text = (k: string, re: RegExp) => {
		const v = (q.get(k) ?? '').trim();
		if (v === '') return null;
		if (!re.test(v)) {
			problems.push(`${k}: not a valid value`);
			return null;
		}
		return v;
	};
	const practice = text('practice', /^\d{3}$/);
	const status = q.get('status') ?? 'open';
	const minAge = text('min_age_days', /^\d{1,5}$/);
	const maxAge = text('max_age_days', /^\d{1,5}$/);
	return {
		filters: {
			district: text('district', /^[A-Za-z0-9_-]{1,32}$/),
			practice: practice && PRACTICE_CODES.includes(practice) ? practice : null,
			code: text('code', /^[a-z0-9-]{1,64}$/),
			minAgeDays: minAge === null ? null : Number(minAge),
			maxAgeDays: maxAge === null ? null : Number(maxAge),
			status: (REVIEW_STATUSES as readonly string[]).includes(status) || status === 'all' ? (status as ReviewFilters['status']) : 'open'
		},
		problems
	};
}

export const load = (async ({ locals, url }) => {
	const p = locals.principal!;
	const db = getDb();
	const { filters, problems } = filtersOf(url);
	const page = await listReviews(p, url, filters, PAGE_SIZE);
	const version = await activeMethodVersion(db);
	const method = version ? await loadMethod(db, version) : null;
	const items = await Promise.all(
		page.data.map(async (item) => {
			const record = await recordDetail(db, p, item.record_id);
			const fields = record.data as unknown as BioreactorFields;
			const screening =
				record.practice_code === BIOREACTOR_CODE && hasScreeningData(fields) ? screenBioreactor(fields, method ?? undefined) : null;
			return { item, record, screening, history: await reviewHistory(db, item.record_id) };
		})
	);
	const [districts, codes] = await Promise.all([
		db.selectFrom('districts').select(['code', 'name']).orderBy('name').execute(),
		db.selectFrom('record_findings').select('code').where('severity', '=', 'warning').distinct().orderBy('code').execute()
	]);
	return {
		items,
		next: page.next,
		filters,
		problems,
		districts,
		codes: codes.map((c) => c.code),
		canDecide: p.role === 'manager'
	};
}) satisfies PageServerLoad;

export const actions = {
	decide: async ({ request, locals }) => {
		const form = await request.formData();
		const recordId = String(form.get('record_id') ?? '');
		const values = { decision: String(form.get('decision') ?? ''), comment: String(form.get('comment') ?? '') };
		const parsed = ReviewDecisionInput.safeParse(values);
		if (!parsed.success) return fail(400, { recordId, values, errors: fieldErrors(parsed.error) });
		try {
			const r = await decideReview(locals.principal!, recordId, parsed.data);
			return { recordId, decided: r.status, mailed: r.mailed_to };
		} catch (e) {
			if (e instanceof ApiError) return fail(e.init.status, { recordId, values, errors: { _form: e.init.detail ?? 'Not possible.' } });
			throw e;
		}
	}
} satisfies Actions;
