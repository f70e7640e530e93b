// The intake API: batches from CSV/XLSX/JSON, modes, idempotency, size limit, access, findings, records.
import { randomUUID } from 'node:crypto';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import request from 'supertest';
import { afterAll, describe, expect, it } from 'vitest';
import { appHandler, bearer, DEMO_TOKENS } from '../helpers/app';
import {
	allFindings,
	BASIC_HEADER,
	BLH_COUNTY,
	closeTestDb,
	count,
	csv,
	db,
	DEMO_DIR,
	demoFile,
	KTP_COUNTY,
	runBatch,
	sendBatch,
	uniquePrefix,
	waitForBatch,
	XLSX_TYPE
} from '../helpers/batches';

afterAll(closeTestDb);

const T = DEMO_TOKENS;

interface Mistake {
	row: number;
	column: string | null;
	code: string;
	severity: 'error' | 'warning';
	what: string;
}

describe('the demo mistakes file in check mode', () => {
	const manifest = JSON.parse(readFileSync(path.join(DEMO_DIR, 'mistakes.json'), 'utf8')) as { mistakes: Mistake[] };

	it('has at least a dozen documented mistakes of different kinds', () => {
		expect(manifest.mistakes.length).toBeGreaterThanOrEqual(12);
		expect(new Set(manifest.mistakes.map((m) => m.code)).size).toBeGreaterThanOrEqual(10);
	});

	it('names the right row and column for each mistake, and writes nothing', async () => {
		const before = await count('select count(*) as n from records');
		const b = await runBatch(T.district, demoFile('mistakes.csv'), { mode: 'check', fileName: 'mistakes.csv' });
		expect(b.status).toBe('done');
		expect(b.committed).toBe(false);
		expect(b.valid).toBe(false);
		const findings = await allFindings(T.district, b.id);
		for (const m of manifest.mistakes) {
			const hit = findings.find((f) => f.row === m.row && f.column === m.column && f.code === m.code);
			expect(
				hit,
				`${m.what}: expected ${m.code} at row ${m.row}, column ${m.column}; got ${JSON.stringify(findings.filter((f) => f.row === m.row))}`
			).toBeDefined();
			expect(hit!.severity).toBe(m.severity);
			expect(hit!.message.length).toBeGreaterThan(10);
		}
		// Every error the file produces is one of the documented mistakes (no false alarms on good cells).
		const documented = new Set(manifest.mistakes.map((m) => `${m.row}|${m.column}|${m.code}`));
		const extra = findings.filter((f) => f.severity === 'error' && !documented.has(`${f.row}|${f.column}|${f.code}`));
		expect(extra, JSON.stringify(extra)).toEqual([]);
		expect(await count('select count(*) as n from records')).toBe(before);
	});
});

describe('sending the clean demo files', () => {
	it('the clean CSV twice with different keys: the second is all unchanged and adds no version', async () => {
		const file = demoFile('clean.csv');
		const first = await runBatch(T.district, file, { mode: 'all', fileName: 'clean.csv' });
		expect(first.status).toBe('done');
		expect(first.valid).toBe(true);
		expect(first.committed).toBe(true);
		expect(first.counts.rows).toBeGreaterThanOrEqual(40);
		expect(first.counts.accepted).toBe(first.counts.rows);
		const versionsBefore = await count('select count(*) as n from record_versions');
		const second = await runBatch(T.district, file, { mode: 'all', fileName: 'clean.csv' });
		expect(second.id).not.toBe(first.id);
		expect(second.counts.unchanged).toBe(second.counts.rows);
		expect(second.counts.created + second.counts.updated + second.counts.withdrawn).toBe(0);
		expect(await count('select count(*) as n from record_versions')).toBe(versionsBefore);
		expect(await count('select count(*) as n from record_versions where batch_id = $1', [second.id])).toBe(0);
	});

	it('the clean XLSX is read from its first sheet and accepted', async () => {
		const b = await runBatch(T.district, demoFile('clean.xlsx'), { mode: 'valid', contentType: XLSX_TYPE, fileName: 'clean.xlsx' });
		expect(b.status).toBe('done');
		expect(b.counts.errors).toBe(0);
		expect(b.counts.rows).toBeGreaterThanOrEqual(20);
		expect(b.counts.accepted).toBe(b.counts.rows);
	});

	it('a JSON array and NDJSON go through the same checks', async () => {
		const p = uniquePrefix('JS');
		const rec = (i: number) => ({
			local_id: `${p}-${i}`,
			practice_code: '340',
			county_fips: BLH_COUNTY,
			installed_on: '2024-10-01',
			extent_acres: 40 + i
		});
		const a = await runBatch(T.district, JSON.stringify([rec(1), rec(2)]), { mode: 'valid', contentType: 'application/json' });
		expect(a.counts).toMatchObject({ rows: 2, accepted: 2, created: 2 });
		const n = await runBatch(T.district, [rec(2), rec(3)].map((r) => JSON.stringify(r)).join('\n') + '\n', {
			mode: 'valid',
			contentType: 'application/x-ndjson'
		});
		expect(n.counts).toMatchObject({ rows: 2, accepted: 2, created: 1, unchanged: 1 });
	});
});

describe('Idempotency-Key', () => {
	const body = () => csv(BASIC_HEADER, [[`${uniquePrefix('IK')}-1`, '590', BLH_COUNTY, '2023-05-01', '', '', '75', '']]);

	it('is required for all and valid (400 problem), not for check', async () => {
		for (const mode of ['all', 'valid'] as const) {
			const res = await sendBatch(T.district, body(), { mode, key: null });
			expect(res.status).toBe(400);
			expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
			expect(res.body.type).toBe('urn:runnel:problem:idempotency-key-missing');
		}
		const ok = await sendBatch(T.district, body(), { mode: 'check', key: null });
		expect(ok.status).toBe(202);
	});

	it('same key and same body replays the first answer (same batch, same Location)', async () => {
		const key = randomUUID();
		const b = body();
		const first = await sendBatch(T.district, b, { mode: 'valid', key });
		expect(first.status).toBe(202);
		expect(first.headers.location).toBe(`/api/v1/batches/${first.body.id}`);
		const again = await sendBatch(T.district, b, { mode: 'valid', key });
		expect(again.status).toBe(202);
		expect(again.body.id).toBe(first.body.id);
		expect(again.headers.location).toBe(first.headers.location);
		expect(again.headers['idempotent-replayed']).toBe('true');
		await waitForBatch(T.district, first.body.id);
	});

	it('same key and a different body → 422; the key stays with its first batch', async () => {
		const key = randomUUID();
		const first = await sendBatch(T.district, body(), { mode: 'valid', key });
		expect(first.status).toBe(202);
		const other = await sendBatch(T.district, body(), { mode: 'valid', key });
		expect(other.status).toBe(422);
		expect(other.body.type).toBe('urn:runnel:problem:idempotency-key-reused');
		const otherMode = await sendBatch(T.district, body(), { mode: 'all', key });
		expect(otherMode.status).toBe(422);
		await waitForBatch(T.district, first.body.id);
	});

	it('is scoped to the caller: another principal may use the same key', async () => {
		const key = randomUUID();
		const a = await sendBatch(T.district, body(), { mode: 'valid', key });
		const k = csv(BASIC_HEADER, [[`${uniquePrefix('IK2')}-1`, '590', KTP_COUNTY, '2023-05-01', '', '', '75', '']]);
		const b = await sendBatch(T.district2, k, { mode: 'valid', key });
		expect(a.status).toBe(202);
		expect(b.status).toBe(202);
		expect(b.body.id).not.toBe(a.body.id);
	});

	it('twenty concurrent requests with one key make exactly one batch', async () => {
		const key = randomUUID();
		const b = body();
		const h = await appHandler();
		const results = await Promise.all(Array.from({ length: 20 }, () => sendBatch(T.district, b, { mode: 'valid', key }, h)));
		const statuses = results.map((r) => r.status);
		for (const s of statuses) expect([202, 409]).toContain(s);
		const ids = new Set(results.filter((r) => r.status === 202).map((r) => r.body.id));
		expect(ids.size).toBe(1);
		for (const r of results.filter((x) => x.status === 409)) expect(r.body.type).toBe('urn:runnel:problem:idempotency-key-in-flight');
		const [id] = [...ids];
		const sha = (await (await db()).query('select sha256 from batches where id = $1', [id])).rows[0].sha256;
		expect(await count('select count(*) as n from batches where sha256 = $1', [sha])).toBe(1);
		expect(await count(`select count(*) as n from idempotency_keys where key = $1`, [key])).toBe(1);
		await waitForBatch(T.district, id);
	});
});

describe('upload limits and formats', () => {
	it('a body over MAX_UPLOAD_MB → 413 problem (declared length and streamed)', async () => {
		const saved = process.env.MAX_UPLOAD_MB;
		process.env.MAX_UPLOAD_MB = '0.01';
		try {
			const big = Buffer.alloc(20 * 1024, 'a');
			const res = await sendBatch(T.district, big, { mode: 'check' });
			expect(res.status).toBe(413);
			expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
			expect(res.body.type).toBe('urn:runnel:problem:upload-too-large');
			// Chunked (no Content-Length): cut off while streaming.
			const h = await appHandler();
			const { Readable } = await import('node:stream');
			const http = await import('node:http');
			const server = http.createServer(h);
			await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
			const port = (server.address() as { port: number }).port;
			const status = await new Promise<number>((resolve, reject) => {
				const req = http.request(
					{
						host: '127.0.0.1',
						port,
						method: 'POST',
						path: '/api/v1/batches?mode=check',
						headers: { authorization: `Bearer ${T.district}`, 'content-type': 'text/csv', 'transfer-encoding': 'chunked' }
					},
					(res) => {
						res.resume();
						resolve(res.statusCode ?? 0);
					}
				);
				req.on('error', reject);
				Readable.from(Array.from({ length: 40 }, () => Buffer.alloc(1024, 'b'))).pipe(req);
			});
			server.closeAllConnections();
			server.close();
			expect(status).toBe(413);
		} finally {
			if (saved === undefined) delete process.env.MAX_UPLOAD_MB;
			else process.env.MAX_UPLOAD_MB = saved;
		}
	});

	it('an unsupported content type → 415 problem', async () => {
		const res = await sendBatch(T.district, 'hello', { contentType: 'application/pdf' });
		expect(res.status).toBe(415);
		expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
	});

	it('the archived file keeps its sha256 and size', async () => {
		const body = csv(BASIC_HEADER, [[`${uniquePrefix('SH')}-1`, '590', BLH_COUNTY, '2023-05-01', '', '', '75', '']]);
		const res = await sendBatch(T.district, body, { mode: 'check', fileName: 'x.csv' });
		const { createHash } = await import('node:crypto');
		expect(res.body.sha256).toBe(createHash('sha256').update(body).digest('hex'));
		expect(res.body.size_bytes).toBe(Buffer.byteLength(body));
		expect(res.body.file_name).toBe('x.csv');
		const row = (await (await db()).query('select archive_key from batches where id = $1', [res.body.id])).rows[0];
		expect(row.archive_key).toContain('/BLH/');
		expect(row.archive_key).toContain(res.body.id);
		expect(row.archive_key).toContain(res.body.sha256);
	});
});

describe('modes and checks', () => {
	it("another district's county is a finding naming the row and column", async () => {
		const p = uniquePrefix('CT');
		const b = await runBatch(T.district, csv(BASIC_HEADER, [[`${p}-1`, '340', KTP_COUNTY, '2024-11-01', '', '', '50', '']]), {
			mode: 'valid'
		});
		const f = await allFindings(T.district, b.id);
		expect(f).toEqual(expect.arrayContaining([expect.objectContaining({ row: 2, column: 'county_fips', severity: 'error' })]));
		expect(b.counts.rejected).toBe(1);
		expect(await count('select count(*) as n from records where local_id = $1', [`${p}-1`])).toBe(0);
	});

	const mixed = (p: string) =>
		csv(BASIC_HEADER, [
			[`${p}-1`, '340', BLH_COUNTY, '2024-10-01', '', '', '50', ''],
			[`${p}-2`, '340', BLH_COUNTY, '2024-13-01', '', '', '50', ''],
			[`${p}-3`, '605', BLH_COUNTY, '2022-08-15', '', '', '', '45']
		]);

	it('all: one error → nothing written; valid: the valid rows are written and the rest reported', async () => {
		const pa = uniquePrefix('ALL');
		const a = await runBatch(T.district, mixed(pa), { mode: 'all' });
		expect(a.committed).toBe(false);
		expect(a.counts).toMatchObject({ rows: 3, accepted: 0, rejected: 3, created: 0 });
		expect(await count(`select count(*) as n from records where local_id like $1`, [`${pa}-%`])).toBe(0);

		const pv = uniquePrefix('VAL');
		const v = await runBatch(T.district, mixed(pv), { mode: 'valid' });
		expect(v.committed).toBe(true);
		expect(v.counts).toMatchObject({ rows: 3, accepted: 2, rejected: 1, created: 2 });
		expect(await count(`select count(*) as n from records where local_id like $1`, [`${pv}-%`])).toBe(2);
		const f = await allFindings(T.district, v.id);
		expect(f.some((x) => x.row === 3 && x.column === 'installed_on' && x.severity === 'error')).toBe(true);
	});

	it('check reports what would happen and writes nothing', async () => {
		const p = uniquePrefix('CHK');
		const c = await runBatch(T.district, mixed(p), { mode: 'check' });
		expect(c.counts).toMatchObject({ rows: 3, accepted: 2, rejected: 1, created: 2 });
		expect(c.committed).toBe(false);
		expect(await count(`select count(*) as n from records where local_id like $1`, [`${p}-%`])).toBe(0);
	});

	it('a changed row makes a new version with the changed fields; withdrawn withdraws; nothing is deleted', async () => {
		const p = uniquePrefix('VER');
		const one = (acres: string, status = '', withdrawnOn = '') =>
			csv(BASIC_HEADER, [[`${p}-1`, '340', BLH_COUNTY, '2024-10-01', status, withdrawnOn, acres, '']]);
		const a = await runBatch(T.district, one('50'), { mode: 'all' });
		expect(a.counts.created).toBe(1);
		const b = await runBatch(T.district, one('55.5'), { mode: 'all' });
		expect(b.counts.updated).toBe(1);
		const c = await runBatch(T.district, one('55.5', 'withdrawn', '2025-06-01'), { mode: 'all' });
		expect(c.counts.withdrawn).toBe(1);
		const d = await runBatch(T.district, one('55.5'), { mode: 'valid' });
		expect(d.counts.updated).toBe(1);

		const id = (await (await db()).query('select id from records where local_id = $1', [`${p}-1`])).rows[0].id;
		const rec = await request(await appHandler())
			.get(`/api/v1/records/${id}`)
			.set(bearer(T.district));
		expect(rec.status).toBe(200);
		expect(rec.body.version).toBe(4);
		expect(rec.body.status).toBe('installed');
		const v = rec.body.versions as Array<{ version: number; changed_fields: string[]; batch: { id: string } }>;
		expect(v.map((x) => x.version)).toEqual([4, 3, 2, 1]);
		expect(v.find((x) => x.version === 2)!.changed_fields).toEqual(['extent_acres']);
		expect(v.find((x) => x.version === 3)!.changed_fields).toEqual(['status', 'withdrawn_on']);
		expect(v.find((x) => x.version === 2)!.batch.id).toBe(b.id);
	});

	it('rejected rows queue a batch-result mail to the district contact when the district asks for it', async () => {
		const p = uniquePrefix('ML');
		const before = await count(`select count(*) as n from mail_messages where kind = 'batch-result'`);
		const v = await runBatch(T.district, mixed(p), { mode: 'valid', fileName: 'mixed.csv' });
		const mails = (
			await (
				await db()
			).query(`select to_addresses, subject, text_body from mail_messages where kind = 'batch-result' order by id desc limit 1`)
		).rows;
		expect(await count(`select count(*) as n from mail_messages where kind = 'batch-result'`)).toBe(before + 1);
		expect(mails[0].to_addresses).toEqual(['mara.quillfeather@bluestem.example.org']);
		expect(mails[0].text_body).toContain(`/batches/${v.id}`);
		expect(mails[0].subject).toContain('1 of 3 rows rejected');
		// A check-mode run mails nothing.
		await runBatch(T.district, mixed(uniquePrefix('ML2')), { mode: 'check' });
		expect(await count(`select count(*) as n from mail_messages where kind = 'batch-result'`)).toBe(before + 1);
	});

	it('admin must name the district; a manager cannot send', async () => {
		const body = csv(BASIC_HEADER, [[`${uniquePrefix('AD')}-1`, '590', BLH_COUNTY, '2023-05-01', '', '', '75', '']]);
		const noDistrict = await sendBatch(T.admin, body, { mode: 'check' });
		expect(noDistrict.status).toBe(400);
		expect(noDistrict.body.type).toBe('urn:runnel:problem:district-required');
		const withDistrict = await sendBatch(T.admin, body, { mode: 'check', district: 'BLH' });
		expect(withDistrict.status).toBe(202);
		expect(withDistrict.body.district.code).toBe('BLH');
		const manager = await sendBatch(T.manager, body, { mode: 'check' });
		expect(manager.status).toBe(403);
		const wrong = await sendBatch(T.district, body, { mode: 'check', district: 'KTP' });
		expect(wrong.status).toBe(403);
	});
});

describe('findings as CSV', () => {
	it('streams every finding with formula-looking cells neutralised', async () => {
		const p = uniquePrefix('CSV');
		const b = await runBatch(T.district, csv(BASIC_HEADER, [[`${p}-1`, '340', '=1+2', '2024-10-01', '', '', '@SUM(A1)', '']]), {
			mode: 'check'
		});
		const res = await request(await appHandler())
			.get(`/api/v1/batches/${b.id}/findings`)
			.set(bearer(T.district))
			.set('accept', 'text/csv')
			.buffer(true)
			.parse((r, cb) => {
				let s = '';
				r.on('data', (c: Buffer) => (s += c.toString('utf8')));
				r.on('end', () => cb(null, s));
			});
		expect(res.status).toBe(200);
		expect(res.headers['content-type']).toMatch(/^text\/csv/);
		const text = res.body as string;
		expect(text.split('\n')[0]).toContain('row,column,column_number,cell,severity,code,message,value,rule');
		expect(text).toContain("'=1+2");
		expect(text).not.toMatch(/,=1\+2/);
		expect(text).toContain("'@SUM(A1)");
		const q = await request(await appHandler())
			.get(`/api/v1/batches/${b.id}/findings?format=csv&severity=error`)
			.set(bearer(T.district));
		expect(q.status).toBe(200);
		expect(q.headers['content-disposition']).toContain(`batch-${b.id}-findings.csv`);
	});

	it('JSON findings come in cursor pages with next links', async () => {
		const p = uniquePrefix('PG');
		const rows = Array.from({ length: 7 }, (_, i) => [`${p}-${i}`, '340', '1', '2024-10-01', '', '', '50', '']);
		const b = await runBatch(T.district, csv(BASIC_HEADER, rows), { mode: 'check' });
		const h = await appHandler();
		const first = await request(h).get(`/api/v1/batches/${b.id}/findings?limit=3`).set(bearer(T.district));
		expect(first.body.data).toHaveLength(3);
		expect(first.body.next).toMatch(/cursor=/);
		expect(first.headers.link).toContain('rel="next"');
		const second = await request(h).get(first.body.next).set(bearer(T.district));
		expect(second.body.data[0].seq).toBeGreaterThan(first.body.data[2].seq);
		const bad = await request(h).get(`/api/v1/batches/${b.id}/findings?cursor=nonsense`).set(bearer(T.district));
		expect(bad.status).toBe(400);
	});
});

describe('a district sees only its own batches and records', () => {
	it('district2 cannot read a BLH batch, its findings or its records; lists stay within the district', async () => {
		const p = uniquePrefix('OWN');
		const b = await runBatch(T.district, csv(BASIC_HEADER, [[`${p}-1`, '340', BLH_COUNTY, '2024-10-01', '', '', '50', '']]), {
			mode: 'all'
		});
		const h = await appHandler();
		expect((await request(h).get(`/api/v1/batches/${b.id}`).set(bearer(T.district2))).status).toBe(404);
		expect((await request(h).get(`/api/v1/batches/${b.id}/findings`).set(bearer(T.district2))).status).toBe(404);
		expect((await request(h).get(`/api/v1/batches?district=BLH`).set(bearer(T.district2))).status).toBe(403);
		const list = await request(h).get(`/api/v1/batches?limit=200`).set(bearer(T.district2));
		expect(list.status).toBe(200);
		for (const x of list.body.data) expect(x.district.code).toBe('KTP');

		const id = (await (await db()).query('select id from records where local_id = $1', [`${p}-1`])).rows[0].id;
		expect((await request(h).get(`/api/v1/records/${id}`).set(bearer(T.district2))).status).toBe(404);
		expect((await request(h).get(`/api/v1/records?district=BLH`).set(bearer(T.district2))).status).toBe(403);
		const recs = await request(h).get(`/api/v1/records?local_id=${p}-1`).set(bearer(T.district2));
		expect(recs.body.data).toEqual([]);
		// The owner and the state roles see it.
		expect((await request(h).get(`/api/v1/records/${id}`).set(bearer(T.district))).status).toBe(200);
		expect((await request(h).get(`/api/v1/records/${id}`).set(bearer(T.manager))).status).toBe(200);
		expect((await request(h).get(`/api/v1/batches/${b.id}`).set(bearer(T.manager))).status).toBe(200);
		// A researcher has no record-level access at all.
		expect((await request(h).get(`/api/v1/records`).set(bearer(T.researcher))).status).toBe(403);
	});
});

describe('GET /api/v1/records', () => {
	it('filters by fiscal year (July–June, named for the year it ends), county, practice, status; pages by cursor', async () => {
		const p = uniquePrefix('FY');
		const rows = [
			[`${p}-1`, '340', BLH_COUNTY, '2024-06-30', '', '', '10', ''],
			[`${p}-2`, '340', BLH_COUNTY, '2024-07-01', '', '', '10', ''],
			[`${p}-3`, '590', '19063', '2025-06-30', '', '', '10', ''],
			[`${p}-4`, '590', '19063', '2025-01-15', 'withdrawn', '2025-03-01', '10', '']
		];
		await runBatch(T.district, csv(BASIC_HEADER, rows), { mode: 'all' });
		const h = await appHandler();
		const get = async (q: string) => {
			const all: Array<{ local_id: string; fiscal_year: number }> = [];
			let url: string | null = `/api/v1/records?limit=2&${q}`;
			while (url) {
				const res: request.Response = await request(h).get(url).set(bearer(T.district));
				expect(res.status).toBe(200);
				all.push(...res.body.data);
				url = res.body.next;
			}
			return all
				.filter((r) => r.local_id.startsWith(p))
				.map((r) => r.local_id.slice(p.length + 1))
				.sort();
		};
		// FY2024 = 2023-07-01 … 2024-06-30; FY2025 = 2024-07-01 … 2025-06-30.
		expect(await get(`fiscal_year=2024&practice=340`)).toEqual(['1']);
		expect(await get(`fiscal_year=2025&county=19063`)).toEqual(['3', '4']);
		expect(await get(`fiscal_year=2025&status=withdrawn&practice=590`)).toEqual(['4']);
		expect(await get(`local_id=${p}-2`)).toEqual(['2']);
		const one = await request(h).get(`/api/v1/records?local_id=${p}-2`).set(bearer(T.district));
		expect(one.body.data[0].fiscal_year).toBe(2025);
		const bad = await request(h).get(`/api/v1/records?fiscal_year=20x5`).set(bearer(T.district));
		expect(bad.status).toBe(400);
	});
});

describe('PUT /api/v1/records/{district}/{local_id}', () => {
	it('creates, leaves unchanged, versions a change, and refuses errors and other districts', async () => {
		const h = await appHandler();
		const id = uniquePrefix('PUT');
		const rec = { practice_code: '605', county_fips: BLH_COUNTY, installed_on: '2023-09-12', drainage_area_acres: 60, bed_length_ft: 100 };
		const put = (body: unknown, token: string = T.district, district = 'BLH') =>
			request(h)
				.put(`/api/v1/records/${district}/${id}`)
				.set(bearer(token))
				.set('content-type', 'application/json')
				.send(JSON.stringify(body));
		const a = await put(rec);
		expect(a.status, JSON.stringify(a.body)).toBe(201);
		expect(a.body.outcome).toBe('created');
		expect(a.body.record.local_id).toBe(id);
		const b = await put(rec);
		expect(b.status).toBe(200);
		expect(b.body.outcome).toBe('unchanged');
		const c = await put({ ...rec, drainage_area_acres: 62.5 });
		expect(c.body.outcome).toBe('updated');
		expect(c.body.record.version).toBe(2);
		expect(c.body.record.versions[0].changed_fields).toEqual(['drainage_area_acres']);
		expect(c.body.record.versions[0].batch).toBeNull();
		const bad = await put({ ...rec, installed_on: '2023-02-30' });
		expect(bad.status).toBe(422);
		expect(bad.body.errors).toEqual(expect.arrayContaining([expect.objectContaining({ pointer: '/installed_on' })]));
		const other = await put(rec, T.district2);
		expect(other.status).toBe(403);
		const mismatch = await put({ ...rec, local_id: 'something-else' });
		expect(mismatch.status).toBe(422);
		const manager = await put(rec, T.manager);
		expect(manager.status).toBe(403);
	});
});
