// GET /api/v1/records/{id}: the stored estimate under the active method (N and P mean/low/high, credited
// acres, method version), how it is made (baseline × efficiency, stacking share) and, for bioreactors with
// design fields, the design screening — plus the design checks a PUT and a batch report as findings.
//
// Hand-worked values (the method's numbers are read from the hub's own method document, not the code):
// - estimate = credited acres × baseline loss × efficiency; low/high from mean ∓ SD clipped to [0, 1]
//   (product brief, "Estimated reduction"). Default method: 10 lb N/ac/yr statewide baseline, bioreactor
//   43 % (SD 21) → 50 ac × 10 × 0.43 = 215 lb N/yr, low 50 × 10 × 0.22 = 110, high 50 × 10 × 0.64 = 320.
// - stacked on one field: E = 1 − Π(1 − eᵢ), shared in proportion to each own efficiency (rollups issue):
//   bioreactor 0.43 + cereal rye 0.31 → E = 1 − 0.57 × 0.69 = 0.6067; the bioreactor's share
//   0.43 / 0.74 = 0.5811 → 50 × 10 × 0.6067 × 0.5811 = 176.3 lb N/yr.
// - screening: 50 ac at 0.5 in/day → 1.050 cfs peak (NRCS EFH Part 650 Ch. 14); an 8-in main, n 0.015
//   (recalled), 0.1 % → 0.331 cfs by Manning's equation; a 100 × 10 × 2 ft bed treats 12.3 % of peak.
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { RecordDetail } from '$lib/schema/record-api';
import { closeDb, getDb } from '$lib/server/db';
import { getActiveMethodVersion } from '$lib/server/methods';
import { rebuildMethod } from '$lib/server/rollups/refresh';
import { appHandler, bearer, DEMO_TOKENS } from '../helpers/app';
import { allFindings, BLH_COUNTY, closeTestDb, csv, db, runBatch, uniquePrefix } from '../helpers/batches';

type Handler = Awaited<ReturnType<typeof appHandler>>;
let app: Handler;
beforeAll(async () => {
	app = await appHandler();
	// The active method's summary exists (as the in-process service builds it after seeding), so each write
	// refreshes its records' stored estimates in the same transaction.
	await rebuildMethod(getDb(), await getActiveMethodVersion(getDb()));
});
afterAll(async () => {
	await closeTestDb();
	await closeDb();
});

interface Range {
	mean: number;
	low: number;
	high: number;
}
interface MethodDoc {
	version: string;
	practices: Array<{ practice_code: string; n: { mean: number; sd: number | null } | null; p: { mean: number; sd: number | null } | null }>;
	baseline: {
		statewide: { n_lb_per_ac_yr: number; p_lb_per_ac_yr: number };
		counties: Array<{ county_fips: string; n_lb_per_ac_yr: number; p_lb_per_ac_yr: number }>;
	};
	bioreactor: { min_retention_hours: number; design_share_of_peak: number };
}

async function activeMethod(): Promise<MethodDoc> {
	const a = await request(app).get('/api/v1/settings/active-method').set(bearer(DEMO_TOKENS.district)).expect(200);
	const m = await request(app)
		.get(`/api/v1/methods/${encodeURIComponent(a.body.version)}`)
		.set(bearer(DEMO_TOKENS.district))
		.expect(200);
	return m.body.method as MethodDoc;
}

const clip = (x: number) => Math.min(1, Math.max(0, x));
function eff(m: MethodDoc, code: string, k: 'n' | 'p'): Range {
	const e = m.practices.find((p) => p.practice_code === code)?.[k];
	if (!e) return { mean: 0, low: 0, high: 0 };
	return { mean: e.mean, low: clip(e.mean - (e.sd ?? 0)), high: clip(e.mean + (e.sd ?? 0)) };
}
function baseline(m: MethodDoc, county: string) {
	return m.baseline.counties.find((c) => c.county_fips === county) ?? m.baseline.statewide;
}

const BIO = {
	practice_code: '605',
	county_fips: BLH_COUNTY,
	installed_on: '2024-10-01',
	drainage_area_acres: 50,
	drainage_coefficient_in_per_day: 0.5,
	bed_length_ft: 100,
	bed_width_ft: 10,
	bed_depth_ft: 2,
	main_diameter_in: 8,
	main_slope_pct: 0.1
};

async function put(localId: string, body: Record<string, unknown>) {
	return request(app)
		.put(`/api/v1/records/BLH/${localId}`)
		.set(bearer(DEMO_TOKENS.district))
		.set('content-type', 'application/json')
		.send(body);
}

describe('a bioreactor sent alone with PUT', () => {
	const id = uniquePrefix('EST');
	let method: MethodDoc;
	let recordId: string;
	let putBody: { findings: Array<{ code: string; column: string | null; severity: string; message: string }>; record: { id: string } };

	beforeAll(async () => {
		method = await activeMethod();
		const res = await put(id, BIO);
		expect(res.status, JSON.stringify(res.body)).toBe(201);
		putBody = res.body;
		recordId = res.body.record.id;
	});

	it('the PUT answers with the design-check warnings: stable codes, the column, a plain message', () => {
		const design = putBody.findings.filter((f) => f.code.startsWith('bioreactor-') || f.code === 'main-capacity-below-peak');
		expect(design.map((f) => [f.code, f.column, f.severity]).sort()).toEqual([
			['bioreactor-retention-short', 'bed_length_ft', 'warning'],
			['bioreactor-treats-under-15pct', 'bed_length_ft', 'warning'],
			['main-capacity-below-peak', 'main_diameter_in', 'warning']
		]);
		const under = design.find((f) => f.code === 'bioreactor-treats-under-15pct')!;
		expect(under.message).toContain('1.050 cfs peak');
		expect(under.message).toContain('12.3%');
		expect(design.find((f) => f.code === 'main-capacity-below-peak')!.message).toContain('0.331 cfs');
	});

	it('GET returns the stored estimate under the active method, worked by hand from the method’s numbers', async () => {
		const res = await request(app).get(`/api/v1/records/${recordId}`).set(bearer(DEMO_TOKENS.district)).expect(200);
		const body = RecordDetail.parse(res.body); // the registered response shape
		const active = body.estimates.find((e) => e.active)!;
		expect(active, JSON.stringify(body.estimates)).toBeDefined();
		expect(active.method_version).toBe(method.version);
		expect(active.current).toBe(true);
		expect(active.counted).toBe(true);
		expect(active.credited_acres).toBe(50);
		const b = baseline(method, BLH_COUNTY);
		const n = eff(method, '605', 'n');
		const p = eff(method, '605', 'p');
		for (const part of ['mean', 'low', 'high'] as const) {
			expect(active.n_lb[part]).toBeCloseTo(50 * b.n_lb_per_ac_yr * n[part], 3);
			expect(active.p_lb[part]).toBeCloseTo(50 * b.p_lb_per_ac_yr * p[part], 3);
		}
		if (method.version === 'ia-2017.1' || (n.mean === 0.43 && b.n_lb_per_ac_yr === 10)) {
			// The default method: 215 (110–320) lb N/yr, worked by hand above.
			expect(active.n_lb.mean).toBeCloseTo(215, 3);
			expect(active.n_lb.low).toBeCloseTo(110, 3);
			expect(active.n_lb.high).toBeCloseTo(320, 3);
		}
		// How it is made: the breakdown gives the same number as the stored estimate; alone on its field.
		expect(body.estimate).not.toBeNull();
		expect(body.estimate!.n_lb.mean).toBeCloseTo(active.n_lb.mean, 4);
		expect(body.estimate!.baseline.n_lb_per_ac_yr).toBe(b.n_lb_per_ac_yr);
		expect(body.estimate!.credited_basis).toBe('drainage_area_acres');
		expect(body.estimate!.stacked_with).toEqual([]);
		expect(body.estimate!.stacking_share.n).toBe(1);
	});

	it('GET returns the screening with its units and the caution', async () => {
		const res = await request(app).get(`/api/v1/records/${recordId}`).set(bearer(DEMO_TOKENS.district)).expect(200);
		const s = res.body.screening;
		expect(s.available).toBe(true);
		expect(s.method_version).toBe(method.version);
		expect(s.peak_flow).toMatchObject({ unit: 'ft^3/s', label: 'cfs' });
		expect(s.peak_flow.value.toFixed(3)).toBe('1.050');
		expect(s.design_flow.value.toFixed(3)).toBe((method.bioreactor.design_share_of_peak * 1.0503472).toFixed(3));
		expect(s.main.capacity.value.toFixed(3)).toBe('0.331');
		expect(s.pore_volume).toMatchObject({ value: 1400, unit: 'ft^3' });
		expect(s.warnings.map((w: { code: string }) => w.code)).toContain('main-capacity-below-peak');
		expect(s.caution).toMatch(/screening estimates, not a design/);
		expect(s.caution).toMatch(/practice standard/);
		expect(s.caution).toMatch(/local codes/);
		expect(s.caution).toMatch(/licensed engineer or NRCS-approved designer/);
		// The warnings the record carries are the design checks' (stored with the version).
		expect(res.body.current_findings.map((f: { code: string }) => f.code).sort()).toEqual([
			'bioreactor-retention-short',
			'bioreactor-treats-under-15pct',
			'main-capacity-below-peak'
		]);
	});
});

describe('stacked on one field', () => {
	it('a cover crop on the bioreactor’s field: the stored estimate is the bioreactor’s share of 1 − Π(1 − e)', async () => {
		const method = await activeMethod();
		const field = uniquePrefix('FLD');
		const bioId = uniquePrefix('EST');
		const bio = await put(bioId, { ...BIO, field_id: field, bed_length_ft: 130, main_diameter_in: 12, main_slope_pct: 0.5 });
		expect(bio.status, JSON.stringify(bio.body)).toBe(201);
		// Sized to screen clean: no design warnings.
		expect(bio.body.findings).toEqual([]);
		const cover = await put(uniquePrefix('EST'), {
			practice_code: '340',
			county_fips: BLH_COUNTY,
			installed_on: '2024-10-01',
			extent_acres: 80,
			field_id: field
		});
		expect(cover.status, JSON.stringify(cover.body)).toBe(201);

		const res = await request(app).get(`/api/v1/records/${bio.body.record.id}`).set(bearer(DEMO_TOKENS.district)).expect(200);
		const body = RecordDetail.parse(res.body);
		const active = body.estimates.find((e) => e.active)!;
		const b = baseline(method, BLH_COUNTY);
		const e1 = eff(method, '605', 'n');
		const e2 = eff(method, '340', 'n');
		for (const part of ['mean', 'low', 'high'] as const) {
			const combined = 1 - (1 - e1[part]) * (1 - e2[part]);
			// Every scenario is shared in the proportions of the mean efficiencies (so low ≤ mean ≤ high holds).
			const share = e1.mean + e2.mean === 0 ? 0 : e1.mean / (e1.mean + e2.mean);
			expect(active.n_lb[part]).toBeCloseTo(50 * b.n_lb_per_ac_yr * combined * share, 3);
		}
		if (e1.mean === 0.43 && e2.mean === 0.31 && b.n_lb_per_ac_yr === 10) expect(active.n_lb.mean).toBeCloseTo(176.3, 1);
		expect(body.estimate!.stacked_with).toEqual([cover.body.record.id]);
		expect(body.estimate!.stacking_share.n).toBeCloseTo(e1.mean / (e1.mean + e2.mean), 6);
		expect(body.estimate!.n_lb.mean).toBeCloseTo(active.n_lb.mean, 4);
		expect(body.screening?.available).toBe(true);
		if (body.screening?.available) expect(body.screening.warnings).toEqual([]);
	});

	it('a record that is not a bioreactor has no screening', async () => {
		const res = await put(uniquePrefix('EST'), {
			practice_code: '340',
			county_fips: BLH_COUNTY,
			installed_on: '2024-10-01',
			extent_acres: 40
		});
		expect(res.status).toBe(201);
		const got = await request(app).get(`/api/v1/records/${res.body.record.id}`).set(bearer(DEMO_TOKENS.district)).expect(200);
		expect(got.body.screening).toBeNull();
		expect(got.body.estimate.stacking_share.n).toBe(1);
	});
});

describe('a batch reports the design checks as findings and keeps them with the record', () => {
	it('mode=valid: an undersized bed is accepted with its warnings on the row and the column', async () => {
		const p = uniquePrefix('BIOB');
		const header = [
			'local_id',
			'practice_code',
			'county_fips',
			'installed_on',
			'drainage_area_acres',
			'drainage_coefficient_in_per_day',
			'bed_length_ft',
			'bed_width_ft',
			'bed_depth_ft'
		];
		const b = await runBatch(
			DEMO_TOKENS.district,
			csv(header, [
				[`${p}-1`, '605', BLH_COUNTY, '2024-10-01', '50', '0.5', '60', '10', '2'],
				[`${p}-2`, '605', BLH_COUNTY, '2024-10-01', '50', '0.5', '130', '10', '2']
			]),
			{ mode: 'valid', fileName: 'bio.csv' }
		);
		expect(b.status).toBe('done');
		expect(b.counts.accepted).toBe(2);
		const findings = await allFindings(DEMO_TOKENS.district, b.id);
		expect(findings.map((f) => [f.row, f.column, f.column_number, f.cell, f.code, f.severity]).sort()).toEqual([
			[2, 'bed_length_ft', 7, 'G2', 'bioreactor-retention-short', 'warning'],
			[2, 'bed_length_ft', 7, 'G2', 'bioreactor-treats-under-15pct', 'warning']
		]);
		const c = await db();
		const rec = await c.query<{ id: string }>(`select id::text from records where local_id = $1`, [`${p}-1`]);
		const got = await request(app).get(`/api/v1/records/${rec.rows[0].id}`).set(bearer(DEMO_TOKENS.district)).expect(200);
		expect(got.body.current_findings.map((f: { code: string }) => f.code).sort()).toEqual([
			'bioreactor-retention-short',
			'bioreactor-treats-under-15pct'
		]);
		expect(got.body.screening.treated_share_of_peak.value.toFixed(1)).toBe('7.4');
	});
});
