// Field visits: listing them (due, overdue, done), recording outcomes (the district for its own records,
// or the manager) and a manager's confirmation of `not found`, which withdraws the record's credit from the
// visit day: the change hook re-estimates the record and recomputes the rollup cells it touches.
import { sql, type Kysely, type Transaction } from 'kysely';
import { z } from 'zod';
import type { OutcomeInput, VisitView } from '$lib/schema/verification';
import { recordAudit } from '../accounts/audit';
import { actorOf, type Principal } from '../auth/principal';
import { getDb } from '../db';
import type { Database } from '../db/schema';
import { decodeCursor, toPage, type Page } from '../http/cursor';
import { ApiError } from '../http/problem';
import { canReadDistrict, readableDistrictId } from '../records/access';
import { afterRecordsChanged } from '../records/changes';

type Db = Kysely<Database> | Transaction<Database>;

export type VisitState = 'due' | 'overdue' | 'done';

export interface VisitFilters {
	draw: string | null;
	district: string | null;
	state: VisitState | null;
	/** `not_found` visits waiting for a manager's confirmation. */
	unconfirmed: boolean;
}

const today = () => new Date().toISOString().slice(0, 10);

function visitQuery(db: Db) {
	return db
		.selectFrom('verification_visits as v')
		.innerJoin('verification_draws as w', 'w.id', 'v.draw_id')
		.innerJoin('records as r', 'r.id', 'v.record_id')
		.innerJoin('districts as d', 'd.id', 'v.district_id')
		.leftJoin('users as u', 'u.id', 'v.recorded_by_user_id')
		.select([
			'v.id',
			'v.draw_id',
			'w.fiscal_year',
			'v.record_id',
			'r.local_id',
			'r.practice_code',
			'd.code as district_code',
			'd.name as district_name',
			'v.district_id',
			'v.edge_of_field',
			'v.never_visited',
			'v.due_on',
			'v.outcome',
			'v.visited_on',
			'v.repair_due_on',
			'v.note',
			'v.recorded_by',
			'u.name as recorded_by_name',
			'v.recorded_at',
			'v.confirmed_at'
		]);
}

type Row = Awaited<ReturnType<ReturnType<typeof visitQuery>['execute']>>[number];

export function visitState(r: { outcome: string | null; due_on: string }, on = today()): VisitState {
	if (r.outcome !== null) return 'done';
	return r.due_on < on ? 'overdue' : 'due';
}

function view(r: Row): VisitView {
	return {
		id: String(r.id),
		draw_id: String(r.draw_id),
		fiscal_year: r.fiscal_year,
		record_id: String(r.record_id),
		local_id: r.local_id,
		district: { code: r.district_code, name: r.district_name },
		practice_code: r.practice_code,
		edge_of_field: r.edge_of_field,
		never_visited: r.never_visited,
		due_on: r.due_on,
		state: visitState(r),
		outcome: r.outcome,
		visited_on: r.visited_on,
		repair_due_on: r.repair_due_on,
		note: r.note,
		recorded_by: r.recorded_by ? (r.recorded_by_name ?? r.recorded_by) : null,
		recorded_at: r.recorded_at ? new Date(r.recorded_at).toISOString() : null,
		confirmed_at: r.confirmed_at ? new Date(r.confirmed_at).toISOString() : null
	};
}

/**
 * Overdue visits (no outcome, due before today) per draw, newest fiscal year first; draws with none are left
 * out. `districtId` null: every district.
 */
export async function overdueVisitCounts(
	db: Db,
	districtId: number | null,
	on = today()
): Promise<Array<{ draw_id: string; fiscal_year: number; count: number }>> {
	let q = db
		.selectFrom('verification_visits as v')
		.innerJoin('verification_draws as w', 'w.id', 'v.draw_id')
		.select(['v.draw_id', 'w.fiscal_year', (eb) => eb.fn.countAll<string>().as('n')])
		.where('v.outcome', 'is', null)
		.where('v.due_on', '<', on);
	if (districtId !== null) q = q.where('v.district_id', '=', districtId);
	const rows = await q.groupBy(['v.draw_id', 'w.fiscal_year']).orderBy('w.fiscal_year', 'desc').execute();
	return rows.map((r) => ({ draw_id: String(r.draw_id), fiscal_year: r.fiscal_year, count: Number(r.n) }));
}

const VisitCursor = z.object({ id: z.string().regex(/^[0-9]{1,18}$/) });

export async function listVisits(principal: Principal, url: URL, f: VisitFilters, limit: number): Promise<Page<VisitView>> {
	const db = getDb();
	const districtId = await readableDistrictId(db, principal, f.district);
	const cursor = decodeCursor(url.searchParams.get('cursor'), VisitCursor);
	let q = visitQuery(db);
	if (f.draw) q = q.where('v.draw_id', '=', Number(f.draw));
	if (districtId !== null) q = q.where('v.district_id', '=', districtId);
	if (f.state === 'done') q = q.where('v.outcome', 'is not', null);
	if (f.state === 'due') q = q.where('v.outcome', 'is', null).where('v.due_on', '>=', today());
	if (f.state === 'overdue') q = q.where('v.outcome', 'is', null).where('v.due_on', '<', today());
	if (f.unconfirmed) q = q.where('v.outcome', '=', 'not_found').where('v.confirmed_at', 'is', null);
	if (cursor) q = q.where('v.id', '>', cursor.id);
	const rows = await q
		.orderBy('v.id', 'asc')
		.limit(limit + 1)
		.execute();
	return toPage(url, rows, limit, (r) => ({ id: String(r.id) }), view);
}

/** Every visit of a draw the principal may see, in id order, a chunk at a time (for exports). */
export async function* visitsOfDraw(db: Db, principal: Principal, drawId: number): AsyncGenerator<VisitView> {
	let after = '0';
	for (;;) {
		let q = visitQuery(db).where('v.draw_id', '=', drawId).where('v.id', '>', after);
		if (principal.role === 'district') q = q.where('v.district_id', '=', principal.districtId ?? -1);
		const rows = await q.orderBy('v.id', 'asc').limit(1000).execute();
		for (const r of rows) yield view(r);
		if (rows.length < 1000) return;
		after = String(rows[rows.length - 1].id);
	}
}

function notFound(): ApiError {
	return new ApiError({ status: 404, type: 'visit-not-found', detail: 'There is no such field visit that you can see.' });
}

async function lockVisit(trx: Transaction<Database>, principal: Principal, id: string) {
	if (!/^[1-9][0-9]{0,17}$/.test(id)) throw notFound();
	const v = await trx.selectFrom('verification_visits').selectAll().where('id', '=', id).forUpdate().executeTakeFirst();
	if (!v || !canReadDistrict(principal, v.district_id)) throw notFound();
	return v;
}

export async function recordOutcome(principal: Principal, id: string, input: OutcomeInput): Promise<VisitView> {
	if (principal.role !== 'manager' && principal.role !== 'district')
		throw new ApiError({ status: 403, detail: 'Visit outcomes are recorded by the district or the state program manager.' });
	if (input.visited_on > today())
		throw new ApiError({
			status: 422,
			type: 'validation',
			detail: 'The visit day is in the future.',
			errors: [{ pointer: '/visited_on', detail: 'must not be in the future' }]
		});
	const db = getDb();
	await db.transaction().execute(async (trx) => {
		const v = await lockVisit(trx, principal, id);
		if (v.confirmed_at)
			throw new ApiError({
				status: 409,
				type: 'visit-confirmed',
				detail: 'A manager confirmed this practice as not found; the outcome can no longer change.'
			});
		// A manager's own `not found` is confirmed at once; a district's waits for a manager.
		const confirm = input.outcome === 'not_found' && principal.role === 'manager';
		await trx
			.updateTable('verification_visits')
			.set({
				outcome: input.outcome,
				visited_on: input.visited_on,
				repair_due_on: input.repair_due_on ?? null,
				note: input.note || null,
				recorded_by_user_id: principal.userId,
				recorded_by: actorOf(principal),
				recorded_at: sql`now()` as unknown as Date,
				confirmed_by_user_id: confirm ? principal.userId : null,
				confirmed_at: confirm ? (sql`now()` as unknown as Date) : null
			})
			.where('id', '=', id)
			.execute();
		await recordAudit(trx, {
			action: 'visit-recorded',
			actor: principal,
			detail: { visit_id: id, record_id: v.record_id, outcome: input.outcome, visited_on: input.visited_on }
		});
		if (confirm) {
			await recordAudit(trx, { action: 'visit-confirmed', actor: principal, detail: { visit_id: id, record_id: v.record_id } });
			await afterRecordsChanged(trx, [String(v.record_id)]);
		}
	});
	return (await visitById(db, principal, id))!;
}

export async function confirmNotFound(principal: Principal, id: string): Promise<VisitView> {
	if (principal.role !== 'manager')
		throw new ApiError({ status: 403, detail: 'Only the state program manager confirms a not-found visit.' });
	const db = getDb();
	await db.transaction().execute(async (trx) => {
		const v = await lockVisit(trx, principal, id);
		if (v.outcome !== 'not_found')
			throw new ApiError({ status: 409, type: 'not-not-found', detail: 'Only a visit recorded as `not_found` can be confirmed.' });
		if (v.confirmed_at) return;
		await trx
			.updateTable('verification_visits')
			.set({ confirmed_by_user_id: principal.userId, confirmed_at: sql`now()` as unknown as Date })
			.where('id', '=', id)
			.execute();
		await recordAudit(trx, { action: 'visit-confirmed', actor: principal, detail: { visit_id: id, record_id: v.record_id } });
		await afterRecordsChanged(trx, [String(v.record_id)]);
	});
	return (await visitById(db, principal, id))!;
}

export async function visitById(db: Db, principal: Principal, id: string): Promise<VisitView | null> {
	if (!/^[1-9][0-9]{0,17}$/.test(id)) return null;
	const r = await visitQuery(db).where('v.id', '=', id).executeTakeFirst();
	if (!r || !canReadDistrict(principal, r.district_id)) return null;
	return view(r);
}
