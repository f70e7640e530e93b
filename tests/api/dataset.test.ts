// The live research dataset (GET /api/v1/dataset/records): scopes, the small-cell rule end to end, no
// forbidden column or identifying value in any output, cursor pages = streamed CSV = NDJSON, rate limits.
// Floor: Section 1619 of the Food, Conservation, and Energy Act of 2008 (7 U.S.C. 8791(b)). Scenario records
// use state fiscal years in the 1850s, which no other test writes, so their cells are known exactly.
import { parse } from 'csv-parse/sync';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATASET_COLUMNS } from '$lib/domain/anonymise';
import { closeDb, getDb } from '$lib/server/db';
import { getActiveMethodVersion } from '$lib/server/methods';
import { rebuildMethod } from '$lib/server/rollups/refresh';
import { appHandler, bearer, DEMO_TOKENS } from '../helpers/app';
import { createDistrict, createTokenUser, insertRecords } from '../helpers/rollup-fixtures';
import { forbiddenValues, FORBIDDEN_COLUMNS, leakedValues } from '../helpers/dataset';

process.env.ROLLUP_POLL_MS = '3600000';
const db = getDb();
let handler: Awaited<ReturnType<typeof appHandler>>;
const FY = 1851;

const rec = (local_id: string, county: string, op: string, acres: number, extra: Record<string, unknown> = {}) => ({
	local_id,
	practice_code: '340',
	county_fips: county,
	installed_on: `${FY - 1}-09-15`,
	extent_acres: acres,
	operation_id: op,
	field_id: `F-${local_id}`,
	huc12: '070801050101',
	...extra
});

beforeAll(async () => {
	handler = await appHandler();
	await rebuildMethod(db, await getActiveMethodVersion(db));
	const east = await createDistrict(db, 'DSE', 'Dataset test district East', 'DS East', ['19011', '19013', '19015']);
	const west = await createDistrict(db, 'DSW', 'Dataset test district West', 'DS West', ['19017']);
	await insertRecords(db, east, [
		// 19011: three operations → published at county level.
		rec('DS-A1', '19011', 'OPA1', 40.4),
		rec('DS-A2', '19011', 'OPA2', 55.2),
		rec('DS-A3', '19011', 'OPA3', 61.7),
		// 19013 (1 operation) and 19015 (2 operations): small, pooled in region DS East (3 operations).
		rec('DS-B1', '19013', 'OPB1', 12),
		rec('DS-C1', '19015', 'OPC1', 20),
		rec('DS-C2', '19015', 'OPC2', 22)
	]);
	// 19017: one operation alone in region DS West and nothing else left in the state → suppressed.
	await insertRecords(db, west, [rec('DS-D1', '19017', 'OPD1', 30)]);
});
afterAll(async () => {
	await closeDb();
});

async function allJson(query: string, token: string = DEMO_TOKENS.researcher, limit = 2) {
	const rows: Record<string, unknown>[] = [];
	let next: string | null = `/api/v1/dataset/records?${query}&limit=${limit}`;
	while (next) {
		const res: request.Response = await request(handler).get(next).set(bearer(token));
		expect(res.status).toBe(200);
		rows.push(...res.body.data);
		next = res.body.next;
	}
	return rows;
}

describe('access', () => {
	it('researcher and manager tokens read; a district token gets 403 insufficient_scope; no token 401', async () => {
		for (const t of [DEMO_TOKENS.researcher, DEMO_TOKENS.manager]) {
			expect((await request(handler).get('/api/v1/dataset/records?limit=1').set(bearer(t))).status).toBe(200);
		}
		const d = await request(handler).get('/api/v1/dataset/records').set(bearer(DEMO_TOKENS.district));
		expect(d.status).toBe(403);
		expect(d.headers['www-authenticate']).toContain('insufficient_scope');
		expect((await request(handler).get('/api/v1/dataset/records')).status).toBe(401);
	});
	it('rejects a bad query and a forged cursor with problems', async () => {
		const bad = await request(handler).get('/api/v1/dataset/records?county=abc').set(bearer(DEMO_TOKENS.researcher));
		expect(bad.status).toBe(400);
		expect(bad.headers['content-type']).toContain('application/problem+json');
		const cur = await request(handler).get('/api/v1/dataset/records?cursor=nonsense').set(bearer(DEMO_TOKENS.researcher));
		expect(cur.status).toBe(400);
	});
});

describe('the small-cell rule on the live dataset', () => {
	it('publishes county, region and nothing of the suppressed cell', async () => {
		const rows = await allJson(`fy=${FY}&practice=340`);
		const mine = rows.filter((r) => ['19011', null].includes(r.county_fips as string | null) && r.fy_installed === FY);
		const county = mine.filter((r) => r.area_level === 'county');
		const region = mine.filter((r) => r.area_level === 'region');
		expect(county).toHaveLength(3);
		expect(county.map((r) => r.credited_acres).sort()).toEqual([40, 55, 62]);
		expect(county.every((r) => r.huc8 === '07080105')).toBe(true);
		expect(region).toHaveLength(3);
		expect(region.every((r) => r.region === 'DS East' && r.huc8 === null)).toBe(true);
		expect(mine.some((r) => r.region === 'DS West')).toBe(false);
		expect(rows.some((r) => r.county_fips === '19017' || r.county_fips === '19013' || r.county_fips === '19015')).toBe(false);
		for (const r of rows) {
			expect(Object.keys(r).sort()).toEqual([...DATASET_COLUMNS].sort());
			expect(r.pid).toMatch(/^[0-9a-f]{64}$/);
			expect(r.install_month).toBe(9);
		}
		// A county filter never returns generalised rows, and a small county returns nothing.
		expect(await allJson(`fy=${FY}&county=19013`)).toHaveLength(0);
		expect(await allJson(`fy=${FY}&county=19011`, DEMO_TOKENS.researcher, 100)).toHaveLength(3);
	});
	it('pseudonyms are stable between calls and unlike the record ids', async () => {
		const a = (await allJson(`fy=${FY}&county=19011`)).map((r) => r.pid).sort();
		const b = (await allJson(`fy=${FY}&county=19011`)).map((r) => r.pid).sort();
		expect(a).toEqual(b);
		const ids = (await db.selectFrom('records').select('id').where('local_id', 'like', 'DS-A%').execute()).map((r) => String(r.id));
		for (const id of ids) expect(a).not.toContain(id);
	});
});

describe('streamed CSV and NDJSON', () => {
	it('give the same rows as the JSON pages, with only the dataset columns', async () => {
		const json = await allJson(`fy=${FY}`, DEMO_TOKENS.researcher, 3);
		const csv = await request(handler).get(`/api/v1/dataset/records?fy=${FY}&format=csv`).set(bearer(DEMO_TOKENS.researcher)).buffer(true);
		expect(csv.status).toBe(200);
		expect(csv.headers['content-type']).toContain('text/csv');
		expect(csv.headers['ratelimit-limit']).toBeDefined();
		const parsed = parse(csv.text, { columns: true }) as Record<string, string>[];
		expect(Object.keys(parsed[0] ?? {})).toEqual([...DATASET_COLUMNS]);
		expect(parsed.map((r) => r.pid).sort()).toEqual(json.map((r) => r.pid).sort());
		const nd = await request(handler)
			.get(`/api/v1/dataset/records?fy=${FY}`)
			.set(bearer(DEMO_TOKENS.researcher))
			.set('accept', 'application/x-ndjson')
			.buffer(true)
			.parse((res, cb) => {
				let s = '';
				res.on('data', (c: Buffer) => (s += c.toString()));
				res.on('end', () => cb(null, s));
			});
		const lines = (nd.body as string)
			.trim()
			.split('\n')
			.map((l) => JSON.parse(l));
		expect(lines).toEqual(expect.arrayContaining(json));
		expect(lines).toHaveLength(json.length);
	});
	it('no forbidden column and none of the demo scenario’s identifying values in the whole live dataset', async () => {
		const csv = await request(handler).get('/api/v1/dataset/records?format=csv').set(bearer(DEMO_TOKENS.researcher)).buffer(true);
		expect(csv.text.split('\n').length).toBeGreaterThan(20);
		const header = csv.text.split('\n')[0].split(',');
		for (const c of FORBIDDEN_COLUMNS) expect(header).not.toContain(c);
		const values = await forbiddenValues(db);
		expect(values.length).toBeGreaterThan(20);
		const found = leakedValues(csv.text, values);
		expect(found).toEqual([]);
	});
});

describe('rate limit per token', () => {
	it('counts down RateLimit-Remaining and answers 429 with Retry-After', async () => {
		const token = await createTokenUser(db, 'ds-ratelimit@runnel.test', 'researcher', null, 'rnl_test_ds_ratelimit_0001');
		process.env.DATASET_RATE_LIMIT = '3';
		try {
			const seen: string[] = [];
			for (let i = 0; i < 3; i++) {
				const r = await request(handler).get('/api/v1/dataset/records?limit=1').set(bearer(token));
				expect(r.status).toBe(200);
				seen.push(r.headers['ratelimit-remaining']);
			}
			expect(seen).toEqual(['2', '1', '0']);
			const over = await request(handler).get('/api/v1/dataset/records?limit=1').set(bearer(token));
			expect(over.status).toBe(429);
			expect(Number(over.headers['retry-after'])).toBeGreaterThan(0);
			expect(over.headers['content-type']).toContain('application/problem+json');
			// Another token is not affected.
			expect((await request(handler).get('/api/v1/dataset/records?limit=1').set(bearer(DEMO_TOKENS.manager))).status).toBe(200);
		} finally {
			delete process.env.DATASET_RATE_LIMIT;
		}
	});
});
