// Field verification: the manager draws a fiscal year's sample; the district (own records) or the manager
// records what each visit found; the manager confirms a not-found. Lists the visits due, overdue and done.
import { fail, redirect } from '@sveltejs/kit';
import { fiscalYear } from '$lib/domain/fiscal-year';
import { DrawInput, OutcomeInput, type VisitView } from '$lib/schema/verification';
import { getDb } from '$lib/server/db';
import { stateFyStartMonth } from '$lib/server/db/settings';
import { fieldErrors, formValues } from '$lib/server/http/forms';
import { ApiError } from '$lib/server/http/problem';
import { createDraw, drawView, listDraws } from '$lib/server/verification/draws';
import { confirmNotFound, recordOutcome, visitsOfDraw } from '$lib/server/verification/visits';
import type { Actions, PageServerLoad } from './$types';

/** Visits listed on the page per draw; the exports hold all of them. */
const SHOWN = 500;

export const load = (async ({ locals, url }) => {
	const p = locals.principal!;
	const db = getDb();
	const draws = await listDraws(db, p);
	const wanted = url.searchParams.get('draw');
	const draw = (wanted ? await drawView(db, p, wanted) : null) ?? draws[0] ?? null;
	const visits: VisitView[] = [];
	let more = false;
	if (draw) {
		for await (const v of visitsOfDraw(db, p, Number(draw.id))) {
			if (visits.length >= SHOWN) {
				more = true;
				break;
			}
			visits.push(v);
		}
	}
	const currentFy = fiscalYear(new Date().toISOString().slice(0, 10), 'state', await stateFyStartMonth(db));
	return {
		role: p.role,
		draws: draws.map((d) => ({ id: d.id, fiscal_year: d.fiscal_year })),
		draw,
		due: visits.filter((v) => v.state === 'due'),
		overdue: visits.filter((v) => v.state === 'overdue'),
		done: visits.filter((v) => v.state === 'done'),
		more,
		currentFy,
		today: new Date().toISOString().slice(0, 10)
	};
}) satisfies PageServerLoad;

const problem = (e: unknown, extra: Record<string, unknown>) => {
	if (e instanceof ApiError) {
		const errors: Record<string, string> = { _form: e.init.detail ?? 'Not possible.' };
		for (const x of e.init.errors ?? []) errors[x.pointer.replace(/^\//, '')] = x.detail;
		return fail(e.init.status, { ...extra, errors });
	}
	throw e;
};

export const actions = {
	draw: async ({ request, locals }) => {
		const values = formValues(await request.formData());
		const clean = Object.fromEntries(Object.entries(values).filter(([, v]) => v !== ''));
		const parsed = DrawInput.safeParse(clean);
		if (!parsed.success) return fail(400, { action: 'draw', values, errors: fieldErrors(parsed.error) });
		let id: string;
		try {
			id = (await createDraw(locals.principal!, parsed.data)).id;
		} catch (e) {
			return problem(e, { action: 'draw', values });
		}
		redirect(303, `/verification?draw=${id}`);
	},
	outcome: async ({ request, locals }) => {
		const values = formValues(await request.formData());
		const visitId = String(values.visit_id ?? '');
		const input = Object.fromEntries(Object.entries(values).filter(([k, v]) => k !== 'visit_id' && v !== ''));
		const parsed = OutcomeInput.safeParse(input);
		if (!parsed.success) return fail(400, { action: 'outcome', visitId, values, errors: fieldErrors(parsed.error) });
		try {
			await recordOutcome(locals.principal!, visitId, parsed.data);
		} catch (e) {
			return problem(e, { action: 'outcome', visitId, values });
		}
		return { action: 'outcome', visitId, saved: true };
	},
	confirm: async ({ request, locals }) => {
		const visitId = String((await request.formData()).get('visit_id') ?? '');
		try {
			await confirmNotFound(locals.principal!, visitId);
		} catch (e) {
			return problem(e, { action: 'confirm', visitId });
		}
		return { action: 'confirm', visitId, saved: true };
	}
} satisfies Actions;
