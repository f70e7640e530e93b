// Dataset releases: publish (manager only), list, manifest, files streamed from object storage; the signed
// manifest verifies with only the public JWKS and one changed byte in any file or in the manifest fails;
// no identifying value in any release file; the small-cell rule and a linkage test on the release; withdrawal.
import { createHash } from 'node:crypto';
import ExcelJS from 'exceljs';
import { compactVerify, createLocalJWKSet } from 'jose';
import { parse } from 'csv-parse/sync';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { publishedCellKey, roundAcres } from '$lib/domain/anonymise';
import { closeDb, getDb } from '$lib/server/db';
import { pseudonymiser } from '$lib/server/dataset/pseudonym';
import { getActiveMethodVersion } from '$lib/server/methods';
import { rebuildMethod } from '$lib/server/rollups/refresh';
import { appHandler, bearer, DEMO_TOKENS } from '../helpers/app';
import { forbiddenValues, leakedValues } from '../helpers/dataset';

process.env.ROLLUP_POLL_MS = '3600000';
const db = getDb();
let handler: Awaited<ReturnType<typeof appHandler>>;
const VERSION = '2091.1';
const files = new Map<string, Buffer>();
let manifestJws = '';

const binary = (res: request.Response) => res.body as Buffer;
async function download(path: string, token: string = DEMO_TOKENS.researcher): Promise<Buffer> {
	const res = await request(handler)
		.get(path)
		.set(bearer(token))
		.buffer(true)
		.parse((r, cb) => {
			const chunks: Buffer[] = [];
			r.on('data', (c: Buffer) => chunks.push(c));
			r.on('end', () => cb(null, Buffer.concat(chunks)));
		});
	expect(res.status).toBe(200);
	return binary(res);
}

beforeAll(async () => {
	handler = await appHandler();
	await rebuildMethod(db, await getActiveMethodVersion(db));
});
afterAll(async () => {
	await closeDb();
});

describe('the demo scenario', () => {
	it('carries release 2027.1, published and signed: the researcher lists it and its manifest verifies with the JWKS', async () => {
		const list = await request(handler).get('/api/v1/dataset/releases').set(bearer(DEMO_TOKENS.researcher));
		expect(list.status).toBe(200);
		const demo = list.body.data.find((r: { version: string }) => r.version === '2027.1');
		expect(demo).toMatchObject({ version: '2027.1', status: 'published' });
		const one = await request(handler).get('/api/v1/dataset/releases/2027.1').set(bearer(DEMO_TOKENS.researcher));
		expect(one.status).toBe(200);
		const jwks = (await request(handler).get('/.well-known/jwks.json')).body;
		const { payload } = await compactVerify(one.body.manifest_jws, createLocalJWKSet(jwks));
		const manifest = JSON.parse(new TextDecoder().decode(payload));
		expect(manifest.version).toBe('2027.1');
		expect(manifest.row_count).toBeGreaterThan(1000);
	});
});

describe('publishing', () => {
	it('a researcher or district token may not publish; a manager token publishes; the version is frozen', async () => {
		const r = await request(handler).post('/api/v1/dataset/releases').set(bearer(DEMO_TOKENS.researcher)).send({ version: VERSION });
		expect(r.status).toBe(403);
		const d = await request(handler).post('/api/v1/dataset/releases').set(bearer(DEMO_TOKENS.district)).send({ version: VERSION });
		expect(d.status).toBe(403);
		expect(d.headers['www-authenticate']).toContain('insufficient_scope');
		const bad = await request(handler).post('/api/v1/dataset/releases').set(bearer(DEMO_TOKENS.manager)).send({ version: '91' });
		expect(bad.status).toBe(422);
		const mailsBefore = await db
			.selectFrom('mail_messages')
			.select((eb) => eb.fn.countAll<string>().as('n'))
			.where('kind', '=', 'release-published')
			.executeTakeFirstOrThrow();
		const ok = await request(handler)
			.post('/api/v1/dataset/releases')
			.set(bearer(DEMO_TOKENS.manager))
			.send({ version: VERSION, notes: 'Test release.' });
		expect(ok.status).toBe(201);
		expect(ok.body.row_count).toBeGreaterThan(0);
		const again = await request(handler).post('/api/v1/dataset/releases').set(bearer(DEMO_TOKENS.manager)).send({ version: VERSION });
		expect(again.status).toBe(409);
		const mailsAfter = await db
			.selectFrom('mail_messages')
			.select((eb) => eb.fn.countAll<string>().as('n'))
			.where('kind', '=', 'release-published')
			.executeTakeFirstOrThrow();
		expect(Number(mailsAfter.n)).toBeGreaterThan(Number(mailsBefore.n));
	});
	it('the researcher token lists it, reads the manifest and downloads every file', async () => {
		const list = await request(handler).get('/api/v1/dataset/releases').set(bearer(DEMO_TOKENS.researcher));
		expect(list.status).toBe(200);
		expect(list.body.data.map((r: { version: string }) => r.version)).toContain(VERSION);
		const one = await request(handler).get(`/api/v1/dataset/releases/${VERSION}`).set(bearer(DEMO_TOKENS.researcher));
		expect(one.status).toBe(200);
		manifestJws = one.body.manifest_jws;
		for (const f of one.body.files) files.set(f.name, await download(f.href));
		files.set('manifest.json', await download(`/api/v1/dataset/releases/${VERSION}/files/manifest.json`));
		expect(files.size).toBe(7);
		expect((await download(`/api/v1/dataset/releases/${VERSION}/files/manifest.jws`)).toString()).toBe(manifestJws);
	});
});

async function verify(jws: string, fileSet: Map<string, Buffer>, jwks: { keys: object[] }): Promise<boolean> {
	try {
		const { payload } = await compactVerify(jws, createLocalJWKSet(jwks as never));
		const manifest = JSON.parse(new TextDecoder().decode(payload));
		if (Buffer.compare(Buffer.from(payload), fileSet.get('manifest.json')!) !== 0) return false;
		for (const f of manifest.files) {
			const b = fileSet.get(f.name)!;
			if (b.length !== f.bytes || createHash('sha256').update(b).digest('hex') !== f.sha256) return false;
		}
		return true;
	} catch {
		return false;
	}
}

describe('signature', () => {
	it('verifies with only the public JWKS; one changed byte in any file or the manifest fails', async () => {
		const jwks = (await request(handler).get('/.well-known/jwks.json')).body;
		expect(JSON.stringify(jwks)).not.toMatch(/"d"\s*:/);
		expect(await verify(manifestJws, files, jwks)).toBe(true);
		for (const name of files.keys()) {
			const copy = new Map(files);
			const b = Buffer.from(files.get(name)!);
			b[Math.floor(b.length / 2)] ^= 0x01;
			copy.set(name, b);
			expect(await verify(manifestJws, copy, jwks), name).toBe(false);
		}
		// A changed byte in the JWS payload (the manifest inside the signature) fails too.
		const [h, p, s] = manifestJws.split('.');
		const payload = Buffer.from(p, 'base64url');
		payload[10] ^= 0x01;
		expect(await verify(`${h}.${payload.toString('base64url')}.${s}`, files, jwks)).toBe(false);
	});
});

describe('privacy of the release', () => {
	it('no identifying value of the demo scenario in any release file (XLSX cells included)', async () => {
		const values = await forbiddenValues(db);
		const wb = new ExcelJS.Workbook();
		await wb.xlsx.load(files.get('dataset.xlsx')! as never);
		const cells: string[] = [];
		wb.eachSheet((ws) => ws.eachRow((row) => row.eachCell((c) => cells.push(String(c.value)))));
		const texts = [...[...files.entries()].filter(([n]) => !n.endsWith('.xlsx')).map(([, b]) => b.toString('utf8')), cells.join('\n')];
		expect(cells.length).toBeGreaterThan(20);
		for (const t of texts) expect(leakedValues(t, values)).toEqual([]);
		// The scan itself finds a planted value.
		expect(leakedValues(`${texts[0]}\n${values[0]},x`, values)).toEqual([values[0]]);
	});
	it('every published cell of the release has at least k distinct operations; a linkage join on the released columns finds no unique match in a smaller cell', async () => {
		const rows = parse(files.get('dataset.csv')!, { columns: true }) as Record<string, string>[];
		const manifest = JSON.parse(files.get('manifest.json')!.toString());
		const k = manifest.small_cells.k as number;
		// Ground truth (the test may hold the secret): pid → the record's operation.
		const pseudonym = await pseudonymiser(db);
		const est = await db
			.selectFrom('record_estimates as e')
			.innerJoin('records as r', 'r.id', 'e.record_id')
			.innerJoin('districts as d', 'd.id', 'r.district_id')
			.select([
				'e.record_id',
				'e.operation_key',
				'r.district_id',
				'd.code',
				'd.region',
				'r.county_fips',
				'r.practice_code',
				'r.installed_on',
				'e.credited_acres',
				'e.state_fy_installed'
			])
			.where('e.method_version', '=', manifest.method_version)
			.execute();
		const opOf = new Map(est.map((e) => [pseudonym(String(e.record_id)), e.operation_key]));
		const cellOps = new Map<string, Set<string>>();
		for (const r of rows) {
			const key = publishedCellKey({ ...r, fy_installed: Number(r.fy_installed) } as never);
			if (!cellOps.has(key)) cellOps.set(key, new Set());
			cellOps.get(key)!.add(opOf.get(r.pid)!);
		}
		for (const [key, ops] of cellOps) expect(ops.size, key).toBeGreaterThanOrEqual(k);
		// Linkage: one district's own rows joined on the released columns it knows.
		const district = est.filter((e) => e.code === 'BLH');
		expect(district.length).toBeGreaterThan(0);
		for (const e of district) {
			const [y, m] = String(e.installed_on).split('-').map(Number);
			const matches = rows.filter(
				(r) =>
					r.practice_code === e.practice_code &&
					Number(r.fy_installed) === e.state_fy_installed &&
					Number(r.install_year) === y &&
					Number(r.install_month) === m &&
					Number(r.credited_acres) === roundAcres(Number(e.credited_acres)) &&
					(r.county_fips === e.county_fips || (r.area_level === 'region' && r.region === e.region) || r.area_level === 'state')
			);
			if (matches.length === 1) {
				const key = publishedCellKey({ ...matches[0], fy_installed: Number(matches[0].fy_installed) } as never);
				expect(cellOps.get(key)!.size).toBeGreaterThanOrEqual(k);
			}
		}
	});
});

describe('withdrawal', () => {
	it('keeps the release listed as withdrawn with its reason; only a manager may withdraw', async () => {
		const r = await request(handler)
			.post(`/api/v1/dataset/releases/${VERSION}/withdraw`)
			.set(bearer(DEMO_TOKENS.researcher))
			.send({ reason: 'A test withdrawal.' });
		expect(r.status).toBe(403);
		const w = await request(handler)
			.post(`/api/v1/dataset/releases/${VERSION}/withdraw`)
			.set(bearer(DEMO_TOKENS.manager))
			.send({ reason: 'A test withdrawal.' });
		expect(w.status).toBe(200);
		const list = await request(handler).get('/api/v1/dataset/releases').set(bearer(DEMO_TOKENS.researcher));
		const row = list.body.data.find((x: { version: string }) => x.version === VERSION);
		expect(row).toMatchObject({ status: 'withdrawn', withdrawn_reason: 'A test withdrawal.' });
		expect(
			(await request(handler).get(`/api/v1/dataset/releases/${VERSION}/files/README.md`).set(bearer(DEMO_TOKENS.researcher))).status
		).toBe(200);
		expect(
			(await request(handler).get(`/api/v1/dataset/releases/${VERSION}/files/secret.txt`).set(bearer(DEMO_TOKENS.researcher))).status
		).toBe(404);
	});
});
