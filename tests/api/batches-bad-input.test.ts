// Every case of the bad-input corpus (tests/fixtures/bad/manifest.json) sent through the API as an `all`
// batch: the answer is a 4xx problem or a finished batch with findings — never a 5xx, never a `failed`
// batch — and a batch with any error writes nothing. The exact findings per case are checked offline by
// tests/unit/bad-corpus.test.ts; here the pipeline must report the same file-level codes.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { DEMO_TOKENS, ROOT } from '../helpers/app';
import { allFindings, closeTestDb, count, sendBatch, waitForBatch } from '../helpers/batches';
import { makeZip, MINIMAL_PARTS } from '../unit/helpers/zip';

afterAll(closeTestDb);

const DIR = path.join(ROOT, 'tests', 'fixtures', 'bad');

interface Case {
	file?: string;
	generate?: string;
	format: string;
	content_type: string;
	covers: string;
	sheet?: string;
	file_codes: string[];
	rejected_rows: number[];
	accepted: number;
}

const manifest = JSON.parse(readFileSync(path.join(DIR, 'manifest.json'), 'utf8')) as { cases: Case[] };

// The corpus's generated cases (too large or too dangerous to commit), built as tests/unit/bad-corpus.test.ts does.
const HEADER = 'local_id,practice_code,county_fips,installed_on,extent_acres,notes\n';
const OK = (id: string) => `${id},340,19109,2024-10-01,80,fine\n`;
const TEN_MB = 10 * 1024 * 1024;
const rec = (id: string, notes: string) => ({
	local_id: id,
	practice_code: '340',
	county_fips: '19109',
	installed_on: '2024-10-01',
	extent_acres: 80,
	notes
});
function generate(name: string): Buffer {
	switch (name) {
		case 'csv-10mb-cell':
			return Buffer.from(`${HEADER}${OK('G-1')}G-2,340,19109,2024-10-01,80,"${'x'.repeat(TEN_MB)}"\n${OK('G-3')}`);
		case 'csv-40kb-cell':
			return Buffer.from(`${HEADER}${OK('G-1')}G-2,340,19109,2024-10-01,80,${'x'.repeat(40 * 1024)}\n`);
		case 'ndjson-10mb-cell':
			return Buffer.from(
				[rec('G-1', 'fine'), rec('G-2', 'x'.repeat(TEN_MB)), rec('G-3', 'fine')].map((r) => JSON.stringify(r) + '\n').join('')
			);
		case 'json-10mb-cell':
			return Buffer.from(JSON.stringify([rec('G-1', 'fine'), rec('G-2', 'x'.repeat(TEN_MB))]));
		case 'xlsx-zip-bomb':
			return makeZip([...MINIMAL_PARTS, { name: 'xl/sharedStrings.xml', data: Buffer.alloc(1024 * 1024), declaredSize: 0xf0000000 }]);
		case 'xlsx-lying-sizes':
			return makeZip([...MINIMAL_PARTS, { name: 'xl/sharedStrings.xml', data: Buffer.alloc(50 * 1024 * 1024), declaredSize: 1000 }]);
		default:
			throw new Error(`unknown generator ${name}`);
	}
}

describe('the bad-input corpus through POST /api/v1/batches?mode=all', () => {
	it.each(manifest.cases.map((c) => [c.file ?? `(generated) ${c.generate}`, c.sheet ? `sheet=${c.sheet}` : '', c] as const))(
		'%s %s',
		{ timeout: 90_000 },
		async (_name, _opt, c) => {
			const bytes = c.file ? readFileSync(path.join(DIR, c.file)) : generate(c.generate!);
			const versionsBefore = await count('select count(*) as n from record_versions');
			const res = await sendBatch(DEMO_TOKENS.district, bytes, {
				mode: 'all',
				contentType: c.content_type,
				sheet: c.sheet,
				fileName: c.file ?? `${c.generate}.${c.format}`
			});
			expect(res.status, JSON.stringify(res.body)).toBeLessThan(500);
			if (res.status !== 202) {
				expect(res.status).toBeGreaterThanOrEqual(400);
				expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
				return;
			}
			const b = await waitForBatch(DEMO_TOKENS.district, res.body.id, undefined, 90_000);
			expect(b.status, b.failure ?? '').toBe('done');
			const findings = await allFindings(DEMO_TOKENS.district, b.id);
			const fileCodes = findings.filter((f) => f.row === null).map((f) => f.code);
			for (const code of c.file_codes) expect(fileCodes, c.covers).toContain(code);
			const written = await count('select count(*) as n from record_versions where batch_id = $1', [b.id]);
			if (b.counts.errors > 0) {
				// All or nothing: an error anywhere leaves no trace in the records.
				expect(b.committed).toBe(false);
				expect(b.counts.accepted).toBe(0);
				expect(written).toBe(0);
				expect(await count('select count(*) as n from record_versions')).toBe(versionsBefore);
			} else {
				expect(b.counts.rows).toBe(c.accepted);
				expect(written).toBe(b.counts.created + b.counts.updated + b.counts.withdrawn);
			}
		}
	);
});
