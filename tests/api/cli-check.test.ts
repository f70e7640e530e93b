// `runnel check` runs the hub's own reader and checker offline: for every file, its findings equal the
// findings the hub stores for the same file sent with mode=check (same codes, rows, columns, cells,
// values and messages). Files: tricky inputs made here (encodings, quoting, ragged rows, JSON shapes,
// formulas, dates and numbers people really type), every case of the bad-input corpus
// (tests/fixtures/bad/manifest.json) and the demo files.
import { mkdtempSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_TOKENS, startApp } from '../helpers/app';
import { caseBytes, caseName, caseOption, corpus, CORPUS_DIR, type CorpusCase } from '../helpers/bad-corpus';
import {
	allFindings,
	BASIC_HEADER,
	BLH_COUNTY,
	closeTestDb,
	csv,
	db,
	KTP_COUNTY,
	waitForBatch,
	XLSX_TYPE,
	type FindingBody
} from '../helpers/batches';
import { runCli } from '../helpers/cli';

let app: { origin: string; close: () => Promise<void> };
beforeAll(async () => {
	app = await startApp();
});
afterAll(async () => {
	await app?.close();
	await closeTestDb();
});

const dir = mkdtempSync(path.join(os.tmpdir(), 'runnel-cli-check-'));
const CONTENT_TYPES: Record<string, string> = {
	csv: 'text/csv',
	xlsx: XLSX_TYPE,
	ndjson: 'application/x-ndjson',
	json: 'application/json'
};

async function blhCounties(): Promise<string> {
	const r = await (
		await db()
	).query<{ county_fips: string }>(
		`select dc.county_fips from district_counties dc join districts d on d.id = dc.district_id where d.code = 'BLH' order by 1`
	);
	return r.rows.map((x) => x.county_fips.trim()).join(',');
}

type Comparable = Omit<FindingBody, 'seq'> & { rule?: unknown };
const key = (f: Comparable) =>
	JSON.stringify([f.row ?? -1, f.column_number ?? -1, f.code, f.severity, f.column, f.cell, f.value, f.message, f.rule ?? null]);
const normalise = (list: Comparable[]) =>
	list.map(({ seq: _seq, ...f }: Comparable & { seq?: number }) => f).sort((a, b) => (key(a) < key(b) ? -1 : 1));

/** The hub's findings for a file sent with mode=check. */
async function serverFindings(body: Buffer, format: string, fileName: string): Promise<Comparable[]> {
	// Sent byte for byte as a script would (no client-side re-encoding of JSON bodies).
	const res = await fetch(`${app.origin}/api/v1/batches?mode=check`, {
		method: 'POST',
		headers: {
			authorization: `Bearer ${DEMO_TOKENS.district}`,
			'content-type': CONTENT_TYPES[format],
			'content-disposition': `attachment; filename="${fileName}"`
		},
		body: new Uint8Array(body)
	});
	const answer = (await res.json()) as { id: string };
	expect(res.status, JSON.stringify(answer)).toBe(202);
	const b = await waitForBatch(DEMO_TOKENS.district, answer.id);
	expect(b.status).toBe('done');
	return allFindings(DEMO_TOKENS.district, b.id);
}

/** The CLI's findings for the same file, checked offline with the district's counties. */
async function cliFindings(file: string, counties: string): Promise<{ code: number | null; findings: Comparable[] }> {
	const r = await runCli(['check', '--json', '--offline', '--counties', counties, file]);
	expect([0, 2], r.stderr).toContain(r.code);
	const out = JSON.parse(r.stdout) as Array<{ findings: Comparable[] }>;
	return { code: r.code, findings: out[0].findings };
}

const bom = '\uFEFF';
const GOOD = (id: string, county = BLH_COUNTY) => [id, '340', county, '2024-10-01', '', '', '50', ''];
const CASES: Array<{ name: string; format: string; body: Buffer }> = [
	{ name: 'clean.csv', format: 'csv', body: Buffer.from(csv(BASIC_HEADER, [GOOD('CK-1'), GOOD('CK-2')])) },
	{
		name: 'mixed-mistakes.csv',
		format: 'csv',
		body: Buffer.from(
			csv(BASIC_HEADER, [
				GOOD('CK-1'),
				['CK-2', '340', BLH_COUNTY, '2026-02-30', '', '', '50', ''],
				['CK-3', '340', BLH_COUNTY, '02/03/2026', '', '', '1,5', ''],
				['CK-4', '605', KTP_COUNTY, '2024-10-01', '', '', '', 'NaN'],
				['CK-5', '999', '1909', '2024-10-01', 'gone', '', '1e400', ''],
				['CK-1', '340', BLH_COUNTY, '2099-01-01', 'withdrawn', '', '-3', ''],
				['CK 7!', '=HYPERLINK("http://x")', BLH_COUNTY, '2024-10-01', '', '', '50', '']
			])
		)
	},
	{ name: 'bom.csv', format: 'csv', body: Buffer.from(bom + csv(BASIC_HEADER, [GOOD('CK-1')])) },
	{
		name: 'cp1252.csv',
		format: 'csv',
		body: Buffer.concat([Buffer.from(csv([...BASIC_HEADER, 'notes'], [[...GOOD('CK-1'), 'caf']]).trimEnd()), Buffer.from([0xe9, 0x0a])])
	},
	{
		name: 'ragged.csv',
		format: 'csv',
		body: Buffer.from(`${BASIC_HEADER.join(',')}\nCK-1,340,${BLH_COUNTY}\nCK-2,340,${BLH_COUNTY},2024-10-01,,,50,,extra\n`)
	},
	{ name: 'bad-quotes.csv', format: 'csv', body: Buffer.from(`${BASIC_HEADER.join(',')}\n"CK-1,340,${BLH_COUNTY},2024-10-01,,,50,\n`) },
	{
		name: 'unknown-headers.csv',
		format: 'csv',
		body: Buffer.from(`local_id,practice,county_fips,county_fips,installed_on\nCK-1,340,${BLH_COUNTY},${BLH_COUNTY},2024-10-01\n`)
	},
	{ name: 'empty.csv', format: 'csv', body: Buffer.alloc(0) },
	{ name: 'header-only.csv', format: 'csv', body: Buffer.from(BASIC_HEADER.join(',') + '\n') },
	{
		name: 'records.ndjson',
		format: 'ndjson',
		body: Buffer.from(
			[
				JSON.stringify({ local_id: 'CK-1', practice_code: '340', county_fips: BLH_COUNTY, installed_on: '2024-10-01', extent_acres: 50 }),
				'{"local_id": "CK-2", broken',
				JSON.stringify({
					local_id: 'CK-3',
					practice_code: '605',
					county_fips: BLH_COUNTY,
					installed_on: '2024-10-01',
					drainage_area_acres: 'lots',
					surprise: 1
				})
			].join('\n') + '\n'
		)
	},
	{ name: 'not-array.json', format: 'json', body: Buffer.from('{"local_id": "CK-1"}') },
	{
		name: 'array.json',
		format: 'json',
		body: Buffer.from(
			JSON.stringify([
				{ local_id: 'CK-1', practice_code: '340', county_fips: BLH_COUNTY, installed_on: '2024-10-01', extent_acres: 50 },
				42,
				{ local_id: 'CK-2' }
			])
		)
	},
	{ name: 'not-a-zip.xlsx', format: 'xlsx', body: Buffer.from('this is not a workbook') }
];

describe('runnel check = the hub with mode=check', () => {
	let counties = '';
	it.each(CASES)('$name', async ({ name, format, body }) => {
		counties ||= await blhCounties();
		const file = path.join(dir, name);
		writeFileSync(file, body);
		const [server, local] = await Promise.all([serverFindings(body, format, name), cliFindings(file, counties)]);
		expect(normalise(local.findings)).toEqual(normalise(server));
		// Exit 2 exactly when an error is among them.
		expect(local.code).toBe(server.some((f) => f.severity === 'error') ? 2 : 0);
	});

	it('the mistakes case really has findings of several kinds (the comparison is not empty)', async () => {
		const file = path.join(dir, 'mixed-mistakes.csv');
		const { findings } = await cliFindings(file, counties || (await blhCounties()));
		expect(new Set(findings.map((f) => f.code)).size).toBeGreaterThanOrEqual(5);
	});
});

// ---------------------------------------------------------------------------------------------------
// The bad-input corpus: every case, committed file or generated, through the hub and through the CLI.

describe('runnel check = the hub, for every case of the bad-input corpus', () => {
	const label = (c: CorpusCase) => `${caseName(c)}${c.sheet ? ` ${caseOption(c)}` : ''}`;
	const results = new Map<string, { server: Comparable[]; cli: Comparable[]; cliCode: number | null }>();

	beforeAll(async () => {
		const counties = await blhCounties();
		// The hub: every case sent with mode=check first, then all of them awaited.
		const sent: Array<{ c: CorpusCase; id: string }> = [];
		const files: Array<{ c: CorpusCase; file: string }> = [];
		for (const [i, c] of corpus.cases.entries()) {
			const body = caseBytes(c);
			const file = c.file ? path.join(CORPUS_DIR, c.file) : path.join(dir, `generated-${i}-${c.generate}.${c.format}`);
			if (!c.file) writeFileSync(file, body);
			files.push({ c, file });
			const q = new URLSearchParams({ mode: 'check' });
			if (c.sheet) q.set('sheet', c.sheet);
			const res = await fetch(`${app.origin}/api/v1/batches?${q}`, {
				method: 'POST',
				headers: {
					authorization: `Bearer ${DEMO_TOKENS.district}`,
					'content-type': c.content_type,
					'content-disposition': `attachment; filename="${path.basename(file)}"`
				},
				body: new Uint8Array(body)
			});
			const answer = (await res.json()) as { id: string };
			expect(res.status, `${label(c)}: ${JSON.stringify(answer)}`).toBe(202);
			sent.push({ c, id: answer.id });
		}
		// The CLI: one run per (format, sheet), all files of the group at once.
		const groups = new Map<string, Array<{ c: CorpusCase; file: string }>>();
		for (const f of files) {
			const k = `${f.c.format}|${f.c.sheet ?? ''}`;
			groups.set(k, [...(groups.get(k) ?? []), f]);
		}
		const cli = new Map<CorpusCase, { findings: Comparable[]; code: number | null }>();
		for (const group of groups.values()) {
			const { format, sheet } = group[0].c;
			const args = ['check', '--json', '--offline', '--counties', counties, '--format', format, ...(sheet ? ['--sheet', sheet] : [])];
			const r = await runCli([...args, ...group.map((g) => g.file)], { timeoutMs: 300_000 });
			expect([0, 2], r.stderr).toContain(r.code);
			const out = JSON.parse(r.stdout) as Array<{ findings: Comparable[] }>;
			expect(out).toHaveLength(group.length);
			// Each file alone decides its own exit code; the group's is the worst of them.
			group.forEach((g, i) =>
				cli.set(g.c, { findings: out[i].findings, code: out[i].findings.some((f) => f.severity === 'error') ? 2 : 0 })
			);
		}
		for (const { c, id } of sent) {
			const b = await waitForBatch(DEMO_TOKENS.district, id, undefined, 300_000);
			expect(b.status, label(c)).toBe('done');
			const local = cli.get(c)!;
			results.set(label(c), { server: await allFindings(DEMO_TOKENS.district, id), cli: local.findings, cliCode: local.code });
		}
	}, 900_000);

	it.each(corpus.cases.map((c) => [label(c)]))('%s', (name) => {
		const r = results.get(name)!;
		expect(r, 'checked by both').toBeDefined();
		expect(normalise(r.cli)).toEqual(normalise(r.server));
	});

	it('the comparison is not vacuous: most cases give findings, of many kinds', () => {
		const all = [...results.values()];
		expect(all).toHaveLength(corpus.cases.length);
		expect(all.filter((r) => r.server.length > 0).length).toBeGreaterThanOrEqual(30);
		expect(new Set(all.flatMap((r) => r.server.map((f) => f.code))).size).toBeGreaterThanOrEqual(20);
	});
});
