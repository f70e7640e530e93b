// Field verification draws: for a state fiscal year the manager draws a sample of in-service practices
// (pure draw in $lib/domain/verification-sample.ts); the draw, its seed, its parameters and one visit per
// drawn practice are stored. One draw per fiscal year.
import { randomBytes } from 'node:crypto';
import { sql, type Kysely, type Transaction } from 'kysely';
import { fiscalYearRange } from '$lib/domain/fiscal-year';
import { inServiceDuring } from '$lib/domain/in-service';
import { practiceByCode } from '$lib/domain/practice-catalog';
import { practiceMethod } from '$lib/domain/reduction-method';
import { drawSample, type SampleCandidate, type SampleParams } from '$lib/domain/verification-sample';
import type { DrawInput, DrawView } from '$lib/schema/verification';
import { recordAudit } from '../accounts/audit';
import { actorOf, type Principal } from '../auth/principal';
import { getDb } from '../db';
import type { Database } from '../db/schema';
import { stateFyStartMonth } from '../db/settings';
import { ApiError } from '../http/problem';
import { activeMethodVersion, loadMethod } from '../rollups/method-source';
import { EFFECTIVE_WITHDRAWN_ON } from './credit';

type Db = Kysely<Database> | Transaction<Database>;

/** Records per query while loading the population (keyset chunks). */
const CHUNK = 10_000;

/**
 * The practices in service during a state FY (in-service rule of $lib/domain/in-service.ts, lifespan of the
 * active method or else the practice catalog) and not withdrawn — their own withdrawal or a confirmed
 * not-found visit — by the time of the draw: there is nothing left to visit on a withdrawn one.
 */
export async function loadPopulation(db: Db, fy: number): Promise<SampleCandidate[]> {
	const startMonth = await stateFyStartMonth(db);
	const { first, last } = fiscalYearRange(fy, 'state', startMonth);
	const version = await activeMethodVersion(db);
	const method = version ? await loadMethod(db, version) : null;
	const out: SampleCandidate[] = [];
	let after = '0';
	for (;;) {
		const { rows } = await sql<{
			id: string;
			district_code: string;
			practice_code: string;
			installed_on: string;
			status: string;
			withdrawn_on: string | null;
			lifespan_years: number;
			visited: boolean;
		}>`
			select r.id::text as id, d.code as district_code, r.practice_code, r.installed_on, r.status,
				${EFFECTIVE_WITHDRAWN_ON} as withdrawn_on, p.lifespan_years,
				exists (select 1 from verification_visits v where v.record_id = r.id and v.outcome is not null) as visited
			from records r join districts d on d.id = r.district_id join practices p on p.code = r.practice_code
			where r.id > ${after}::bigint and r.installed_on <= ${last}::date and r.status = 'installed'
			order by r.id limit ${CHUNK}`.execute(db);
		for (const r of rows) {
			if (r.withdrawn_on !== null) continue;
			const lifespan = (method && practiceMethod(method, r.practice_code)?.lifespan_years) || r.lifespan_years;
			if (!inServiceDuring(r, lifespan, first, last)) continue;
			out.push({
				id: r.id,
				district: r.district_code,
				edgeOfField: practiceByCode(r.practice_code)?.category === 'edge_of_field',
				neverVisited: !r.visited
			});
		}
		if (rows.length < CHUNK) break;
		after = rows[rows.length - 1].id;
	}
	return out;
}

const paramsOf = (input: DrawInput): SampleParams => ({
	percent: input.percent,
	minPerDistrict: input.min_per_district,
	edgeWeight: input.edge_weight,
	neverVisitedWeight: input.never_visited_weight
});

export async function createDraw(principal: Principal, input: DrawInput): Promise<DrawView> {
	if (principal.role !== 'manager') throw new ApiError({ status: 403, detail: 'Only the state program manager draws the sample.' });
	const db = getDb();
	const startMonth = await stateFyStartMonth(db);
	const { last } = fiscalYearRange(input.fiscal_year, 'state', startMonth);
	const seed = input.seed ?? randomBytes(8).toString('hex');
	const dueOn = input.due_on ?? last;
	const id = await db.transaction().execute(async (trx) => {
		// One draw per FY: a second request waits for the first and then finds it.
		await sql`select pg_advisory_xact_lock(hashtextextended(${'runnel:verification-draw:' + input.fiscal_year}, 0))`.execute(trx);
		const existing = await trx
			.selectFrom('verification_draws')
			.select(['id', 'seed'])
			.where('fiscal_year', '=', input.fiscal_year)
			.executeTakeFirst();
		if (existing)
			throw new ApiError({
				status: 409,
				type: 'draw-exists',
				detail: `Fiscal year ${input.fiscal_year} already has its sample (draw ${existing.id}, seed ${existing.seed}).`,
				extra: { draw: `/api/v1/verification/draws/${existing.id}` }
			});
		const population = await loadPopulation(trx, input.fiscal_year);
		const result = drawSample(population, paramsOf(input), seed);
		const draw = await trx
			.insertInto('verification_draws')
			.values({
				fiscal_year: input.fiscal_year,
				seed,
				params: JSON.stringify({
					percent: input.percent,
					min_per_district: input.min_per_district,
					edge_weight: input.edge_weight,
					never_visited_weight: input.never_visited_weight,
					per_district: result.perDistrict
				}),
				population: population.length,
				sample_size: result.drawn.length,
				due_on: dueOn,
				drawn_by_user_id: principal.userId,
				actor: actorOf(principal)
			})
			.returning('id')
			.executeTakeFirstOrThrow();
		for (let i = 0; i < result.drawn.length; i += 5000) {
			const part = result.drawn.slice(i, i + 5000);
			await sql`
				insert into verification_visits (draw_id, record_id, district_id, edge_of_field, never_visited, due_on)
				select ${draw.id}, u.id, r.district_id, u.edge, u.never, ${dueOn}::date
				from unnest(${part.map((c) => c.id)}::bigint[], ${part.map((c) => c.edgeOfField)}::boolean[], ${part.map((c) => c.neverVisited)}::boolean[])
					as u(id, edge, never)
				join records r on r.id = u.id`.execute(trx);
		}
		await recordAudit(trx, {
			action: 'verification-drawn',
			actor: principal,
			detail: { fiscal_year: input.fiscal_year, seed, population: population.length, sample_size: result.drawn.length }
		});
		return draw.id;
	});
	return (await drawView(db, principal, String(id)))!;
}

/** One draw with its per-district figures (a district principal sees its own district's row only). */
export async function drawView(db: Db, principal: Principal, id: string): Promise<DrawView | null> {
	if (!/^[1-9][0-9]{0,9}$/.test(id)) return null;
	const d = await db
		.selectFrom('verification_draws as w')
		.leftJoin('users as u', 'u.id', 'w.drawn_by_user_id')
		.selectAll('w')
		.select('u.name')
		.where('w.id', '=', Number(id))
		.executeTakeFirst();
	if (!d) return null;
	const own = principal.role === 'district' ? (principal.districtId ?? -1) : null;
	const params = d.params as {
		percent: number;
		min_per_district: number;
		edge_weight: number;
		never_visited_weight: number;
		per_district?: Array<{ district: string; population: number }>;
	};
	let q = db
		.selectFrom('verification_visits as v')
		.innerJoin('districts as dd', 'dd.id', 'v.district_id')
		.select((eb) => [
			'dd.code',
			'dd.name',
			eb.fn.countAll<string>().as('drawn'),
			eb.fn.count<string>('v.outcome').as('done'),
			eb.fn.count<string>('v.id').filterWhere('v.outcome', '=', 'in_place_working').as('working')
		])
		.where('v.draw_id', '=', d.id)
		.groupBy(['dd.code', 'dd.name'])
		.orderBy('dd.code');
	if (own !== null) q = q.where('v.district_id', '=', own);
	const rows = await q.execute();
	const pop = new Map((params.per_district ?? []).map((p) => [p.district, p.population]));
	return {
		id: String(d.id),
		fiscal_year: d.fiscal_year,
		seed: d.seed,
		params: {
			percent: params.percent,
			min_per_district: params.min_per_district,
			edge_weight: params.edge_weight,
			never_visited_weight: params.never_visited_weight
		},
		population: d.population,
		sample_size: d.sample_size,
		due_on: d.due_on,
		drawn_by: d.name ?? d.actor,
		created_at: new Date(d.created_at).toISOString(),
		districts: rows.map((r) => {
			const done = Number(r.done);
			const working = Number(r.working);
			return {
				code: r.code,
				name: r.name,
				population: pop.get(r.code) ?? 0,
				drawn: Number(r.drawn),
				done,
				working,
				share_working: done > 0 ? working / done : null
			};
		})
	};
}

export async function listDraws(db: Db, principal: Principal): Promise<DrawView[]> {
	const ids = await db.selectFrom('verification_draws').select('id').orderBy('fiscal_year', 'desc').limit(100).execute();
	const out: DrawView[] = [];
	for (const r of ids) {
		const v = await drawView(db, principal, String(r.id));
		if (v) out.push(v);
	}
	return out;
}

/** Share verified working per district in the latest draw (for the dashboard); a district sees its own row. */
export async function verificationSummary(db: Db, principal: Principal): Promise<DrawView | null> {
	const latest = await db.selectFrom('verification_draws').select('id').orderBy('fiscal_year', 'desc').executeTakeFirst();
	return latest ? drawView(db, principal, String(latest.id)) : null;
}
