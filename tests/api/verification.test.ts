// Field verification through the API: the manager (only) draws a fiscal year's sample, stored with its seed
// and parameters; districts see and record their own visits; a `not found` confirmed by a manager withdraws
// the record's credit from the visit day, and the rollups follow (incrementally, equal to a full rebuild).
import request from 'supertest';
import { sql } from 'kysely';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { drawSample } from '$lib/domain/verification-sample';
import { stateFiscalYear } from '$lib/domain/fiscal-year';
import { closeDb, getDb } from '$lib/server/db';
import { getActiveMethodVersion } from '$lib/server/methods';
import { rebuildMethod } from '$lib/server/rollups/refresh';
import { loadPopulation } from '$lib/server/verification/draws';
import { appHandler, bearer, DEMO_TOKENS } from '../helpers/app';

const FY = 2025;
let app: Awaited<ReturnType<typeof appHandler>>;
let method = '';
let draw: {
	id: string;
	seed: string;
	sample_size: number;
	population: number;
	params: { percent: number; min_per_district: number; edge_weight: number; never_visited_weight: number };
	districts: Array<{ code: string; drawn: number; population: number }>;
};

type Visit = {
	id: string;
	record_id: string;
	district: { code: string };
	outcome: string | null;
	confirmed_at: string | null;
	state: string;
};

beforeAll(async () => {
	app = await appHandler();
	method = await getActiveMethodVersion(getDb());
	// A built summary, so the credit withdrawal below is applied incrementally inside its transaction.
	await rebuildMethod(getDb(), method);
});
afterAll(() => closeDb());

async function visits(token: string, query = ''): Promise<Visit[]> {
	const out: Visit[] = [];
	let next: string | null = `/api/v1/verification/visits?draw=${draw.id}&limit=200${query}`;
	while (next) {
		const res: request.Response = await request(app).get(next).set(bearer(token));
		expect(res.status, JSON.stringify(res.body)).toBe(200);
		out.push(...res.body.data);
		next = res.body.next;
	}
	return out;
}

async function inServiceCount(districtCode: string, fy: number): Promise<number> {
	const r = await sql<{ n: number }>`
		select coalesce(sum(c.practices), 0)::int as n from rollup_cells c join districts d on d.id = c.district_id
		where c.method_version = ${method} and c.fy_basis = 'state' and c.basis = 'in_service' and c.geo_level = 'district'
			and c.practice_code = '*' and c.fy = ${fy} and d.code = ${districtCode}`.execute(getDb());
	return r.rows[0].n;
}

describe('field verification', () => {
	it('only the manager draws; a district and an admin are refused', async () => {
		for (const token of [DEMO_TOKENS.district, DEMO_TOKENS.admin]) {
			const res = await request(app).post('/api/v1/verification/draws').set(bearer(token)).send({ fiscal_year: FY });
			expect(res.status).toBe(403);
		}
		const bad = await request(app)
			.post('/api/v1/verification/draws')
			.set(bearer(DEMO_TOKENS.manager))
			.send({ fiscal_year: FY, percent: 0 });
		expect(bad.status).toBe(422);
		expect(bad.body.errors[0].pointer).toBe('/percent');
	});

	it('the manager draws FY 2025: seed and parameters stored, per-district minimums hold, a second draw is refused', async () => {
		const res = await request(app)
			.post('/api/v1/verification/draws')
			.set(bearer(DEMO_TOKENS.manager))
			.send({ fiscal_year: FY, seed: 'api-test-seed', percent: 4, min_per_district: 3, edge_weight: 3, never_visited_weight: 2 });
		expect(res.status, JSON.stringify(res.body)).toBe(201);
		expect(res.headers.location).toBe(`/api/v1/verification/draws/${res.body.id}`);
		draw = res.body;
		expect(draw.seed).toBe('api-test-seed');
		expect(draw.params).toEqual({ percent: 4, min_per_district: 3, edge_weight: 3, never_visited_weight: 2 });
		// The six demo districts, and any district other test files added with records of their own.
		expect(draw.districts.map((d) => d.code)).toEqual(expect.arrayContaining(['BLH', 'KTP', 'CWB', 'MLR', 'OSF', 'IWR']));
		for (const d of draw.districts) {
			expect(d.drawn).toBe(Math.min(d.population, Math.max(3, Math.ceil((d.population * 4) / 100))));
			expect(d.drawn).toBeGreaterThanOrEqual(Math.min(3, d.population));
		}
		const stored = await getDb().selectFrom('verification_draws').selectAll().where('id', '=', Number(draw.id)).executeTakeFirstOrThrow();
		expect(stored.seed).toBe('api-test-seed');
		expect(stored.params).toMatchObject({ percent: 4, min_per_district: 3 });

		const again = await request(app).post('/api/v1/verification/draws').set(bearer(DEMO_TOKENS.manager)).send({ fiscal_year: FY });
		expect(again.status).toBe(409);
	});

	it('the stored sample is what the pure draw gives for the stored seed over the same practices', async () => {
		const population = await loadPopulation(getDb(), FY);
		// Records written by other test files after the draw could change the population; the draw records its size.
		if (population.length !== draw.population) return;
		const redo = drawSample(population, { percent: 4, minPerDistrict: 3, edgeWeight: 3, neverVisitedWeight: 2 }, draw.seed);
		const stored = await getDb().selectFrom('verification_visits').select('record_id').where('draw_id', '=', Number(draw.id)).execute();
		expect(new Set(stored.map((v) => String(v.record_id)))).toEqual(new Set(redo.drawn.map((c) => c.id)));
	});

	it('a district sees only its own visits and cannot confirm or touch another district’s', async () => {
		const own = await visits(DEMO_TOKENS.district);
		expect(own.length).toBe(draw.districts.find((d) => d.code === 'BLH')!.drawn);
		expect(own.every((v) => v.district.code === 'BLH')).toBe(true);
		const all = await visits(DEMO_TOKENS.manager);
		expect(all.length).toBe(draw.sample_size);
		const foreign = all.find((v) => v.district.code === 'KTP')!;
		const res = await request(app)
			.post(`/api/v1/verification/visits/${foreign.id}/outcome`)
			.set(bearer(DEMO_TOKENS.district))
			.send({ outcome: 'in_place_working', visited_on: '2025-05-01' });
		expect(res.status).toBe(404);
		const confirm = await request(app).post(`/api/v1/verification/visits/${own[0].id}/confirm`).set(bearer(DEMO_TOKENS.district)).send({});
		expect(confirm.status).toBe(403);
		const byResearcher = await request(app).get('/api/v1/verification/visits').set(bearer(DEMO_TOKENS.researcher));
		expect(byResearcher.status).toBe(403);
	});

	it('outcomes: needs repair requires a due date; a visit day in the future is refused', async () => {
		const [v] = await visits(DEMO_TOKENS.district);
		const noDue = await request(app)
			.post(`/api/v1/verification/visits/${v.id}/outcome`)
			.set(bearer(DEMO_TOKENS.district))
			.send({ outcome: 'needs_repair', visited_on: '2025-05-01' });
		expect(noDue.status).toBe(422);
		expect(noDue.body.errors[0].pointer).toBe('/repair_due_on');
		const future = await request(app)
			.post(`/api/v1/verification/visits/${v.id}/outcome`)
			.set(bearer(DEMO_TOKENS.district))
			.send({ outcome: 'in_place_working', visited_on: '2999-01-01' });
		expect(future.status).toBe(422);
		const ok = await request(app)
			.post(`/api/v1/verification/visits/${v.id}/outcome`)
			.set(bearer(DEMO_TOKENS.district))
			.send({ outcome: 'needs_repair', visited_on: '2025-05-01', repair_due_on: '2025-09-01', note: 'Stop boards cracked.' });
		expect(ok.status, JSON.stringify(ok.body)).toBe(200);
		expect(ok.body).toMatchObject({ outcome: 'needs_repair', repair_due_on: '2025-09-01', state: 'done' });
		const done = await visits(DEMO_TOKENS.district, '&state=done');
		expect(done.map((x) => x.id)).toContain(v.id);
	});

	it('a not-found confirmed by the manager withdraws the credit from the visit day; the rollups follow and equal a rebuild', async () => {
		const db = getDb();
		// A BLH visit whose record still counts in service in a later fiscal year.
		const candidates = await sql<{ visit_id: string; record_id: string; state_fy_last: number }>`
			select v.id::text as visit_id, v.record_id::text as record_id, e.state_fy_last
			from verification_visits v join record_estimates e on e.record_id = v.record_id and e.method_version = ${method}
			join districts d on d.id = v.district_id
			where v.draw_id = ${Number(draw.id)} and d.code = 'BLH' and v.outcome is null and e.state_fy_last >= 2026
			order by v.id`.execute(db);
		expect(candidates.rows.length).toBeGreaterThan(0);
		const target = candidates.rows[0];
		const visitedOn = '2025-03-14';
		const fyOfVisit = stateFiscalYear(visitedOn, 7);
		const laterFy = fyOfVisit + 1;
		const before = await inServiceCount('BLH', laterFy);

		// The district records it: nothing changes until a manager confirms.
		const rec = await request(app)
			.post(`/api/v1/verification/visits/${target.visit_id}/outcome`)
			.set(bearer(DEMO_TOKENS.district))
			.send({ outcome: 'not_found', visited_on: visitedOn, note: 'No structure at the outlet.' });
		expect(rec.status).toBe(200);
		expect(rec.body.confirmed_at).toBeNull();
		expect(await inServiceCount('BLH', laterFy)).toBe(before);
		const waiting = await visits(DEMO_TOKENS.manager, '&unconfirmed=true');
		expect(waiting.map((v) => v.id)).toContain(target.visit_id);

		const conf = await request(app)
			.post(`/api/v1/verification/visits/${target.visit_id}/confirm`)
			.set(bearer(DEMO_TOKENS.manager))
			.send({});
		expect(conf.status, JSON.stringify(conf.body)).toBe(200);
		expect(conf.body.confirmed_at).not.toBeNull();

		const est = await db
			.selectFrom('record_estimates')
			.select(['state_fy_last'])
			.where('record_id', '=', target.record_id)
			.where('method_version', '=', method)
			.executeTakeFirstOrThrow();
		expect(est.state_fy_last).toBe(fyOfVisit);
		expect(await inServiceCount('BLH', laterFy)).toBe(before - 1);
		// The record itself is unchanged (a field visit is not a new version of the district's data).
		const r = await db
			.selectFrom('records')
			.select(['status', 'withdrawn_on'])
			.where('id', '=', target.record_id)
			.executeTakeFirstOrThrow();
		expect(r.status).toBe('installed');

		// Once confirmed, the outcome can no longer change.
		const change = await request(app)
			.post(`/api/v1/verification/visits/${target.visit_id}/outcome`)
			.set(bearer(DEMO_TOKENS.manager))
			.send({ outcome: 'in_place_working', visited_on: visitedOn });
		expect(change.status).toBe(409);

		// The incremental result equals a full rebuild from all records.
		const cells = async () =>
			(
				await sql<{ k: string }>`select concat_ws('|', fy_basis, basis, geo_level, fy, geo, practice_code, practices, n_lb_mean) as k
				from rollup_cells c where c.method_version = ${method} and c.district_id = (select id from districts where code = 'BLH') order by 1`.execute(
					db
				)
			).rows.map((x) => x.k);
		const incremental = await cells();
		await rebuildMethod(db, method);
		expect(await cells()).toEqual(incremental);
	});

	it('the draw page figures: share verified working per district', async () => {
		const res = await request(app).get(`/api/v1/verification/draws/${draw.id}`).set(bearer(DEMO_TOKENS.district));
		expect(res.status).toBe(200);
		expect(res.body.districts.map((d: { code: string }) => d.code)).toEqual(['BLH']);
		const blh = res.body.districts[0];
		expect(blh.done).toBe(2);
		expect(blh.working).toBe(0);
		expect(blh.share_working).toBe(0);
	});

	it('exports the sample and outcomes as CSV and XLSX (a district gets its own rows)', async () => {
		const csv = await request(app).get(`/api/v1/verification/draws/${draw.id}/export?format=csv`).set(bearer(DEMO_TOKENS.district));
		expect(csv.status).toBe(200);
		expect(csv.headers['content-type']).toMatch(/^text\/csv/);
		expect(csv.headers['content-disposition']).toContain('seed-api-test-seed');
		const lines = csv.text
			.replace(/^\uFEFF/, '')
			.trim()
			.split('\n');
		expect(lines[0]).toContain('Outcome');
		expect(lines.length - 1).toBe(draw.districts.find((d) => d.code === 'BLH')!.drawn);
		expect(lines.slice(1).every((l) => l.includes(',BLH,'))).toBe(true);
		expect(csv.text).toContain('Needs repair');
		expect(csv.text).toContain('Not found');

		const xlsx = await request(app)
			.get(`/api/v1/verification/draws/${draw.id}/export?format=xlsx`)
			.set(bearer(DEMO_TOKENS.manager))
			.buffer(true)
			.parse((res, cb) => {
				const chunks: Buffer[] = [];
				res.on('data', (c: Buffer) => chunks.push(c));
				res.on('end', () => cb(null, Buffer.concat(chunks)));
			});
		expect(xlsx.status).toBe(200);
		const ExcelJS = (await import('exceljs')).default;
		const wb = new ExcelJS.Workbook();
		await wb.xlsx.load(xlsx.body as unknown as ArrayBuffer);
		const sheet = wb.getWorksheet('Visits')!;
		expect(sheet.rowCount - 1).toBe(draw.sample_size);
		const about = wb.getWorksheet('Draw')!;
		const seedRow = about.getRows(1, about.rowCount)!.find((r) => String(r.getCell(1).value).startsWith('Seed'))!;
		expect(seedRow.getCell(2).value).toBe('api-test-seed');
	});
});
