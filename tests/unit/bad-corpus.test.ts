// The bad-input corpus (tests/fixtures/bad/manifest.json): every file goes through readRows and the
// checker (checkFile) and must give exactly the findings its manifest lists — and never throw.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import type { Finding } from '../../src/lib/schema/findings';
import { checkFile, type CheckEvent, type CheckStats } from '../../src/lib/server/ingest/check-file';
import { offlineCheckContext } from '../../src/lib/server/ingest/context';
import type { RowFormat } from '../../src/lib/server/ingest/read-rows';
import { chunked } from './helpers/read';
import { makeZip, MINIMAL_PARTS } from './helpers/zip';

const DIR = path.resolve(import.meta.dirname, '..', 'fixtures', 'bad');

interface Case {
	file?: string;
	generate?: string;
	format: RowFormat;
	content_type: string;
	covers: string;
	sheet?: string;
	file_codes: string[];
	row_codes: Record<string, string[]>;
	rejected_rows: number[];
	accepted: number;
	values?: Record<string, Record<string, unknown>>;
}

const manifest = JSON.parse(readFileSync(path.join(DIR, 'manifest.json'), 'utf8')) as {
	context: { state_fips: string; district_counties: string[]; today: string };
	cases: Case[];
};
const ctx = offlineCheckContext({
	stateFips: manifest.context.state_fips,
	districtCounties: new Set(manifest.context.district_counties),
	today: manifest.context.today
});

const HEADER = 'local_id,practice_code,county_fips,installed_on,extent_acres,notes\n';
const OK = (id: string) => `${id},340,19109,2024-10-01,80,fine\n`;
const TEN_MB = 10 * 1024 * 1024;

/** The generated cases: too big (or too dangerous) to commit. */
function generate(name: string): Buffer {
	switch (name) {
		case 'csv-10mb-cell':
			return Buffer.from(`${HEADER}${OK('G-1')}G-2,340,19109,2024-10-01,80,"${'x'.repeat(TEN_MB)}"\n${OK('G-3')}`);
		case 'csv-40kb-cell':
			return Buffer.from(`${HEADER}${OK('G-1')}G-2,340,19109,2024-10-01,80,${'x'.repeat(40 * 1024)}\n`);
		case 'ndjson-10mb-cell': {
			const rec = (id: string, notes: string) =>
				JSON.stringify({ local_id: id, practice_code: '340', county_fips: '19109', installed_on: '2024-10-01', extent_acres: 80, notes }) +
				'\n';
			return Buffer.from(rec('G-1', 'fine') + rec('G-2', 'x'.repeat(TEN_MB)) + rec('G-3', 'fine'));
		}
		case 'json-10mb-cell': {
			const rec = (id: string, notes: string) => ({
				local_id: id,
				practice_code: '340',
				county_fips: '19109',
				installed_on: '2024-10-01',
				extent_acres: 80,
				notes
			});
			return Buffer.from(JSON.stringify([rec('G-1', 'fine'), rec('G-2', 'x'.repeat(TEN_MB))]));
		}
		case 'xlsx-zip-bomb':
			return makeZip([...MINIMAL_PARTS, { name: 'xl/sharedStrings.xml', data: Buffer.alloc(1024 * 1024), declaredSize: 0xf0000000 }]);
		case 'xlsx-lying-sizes':
			return makeZip([...MINIMAL_PARTS, { name: 'xl/sharedStrings.xml', data: Buffer.alloc(50 * 1024 * 1024), declaredSize: 1000 }]);
		default:
			throw new Error(`unknown generator ${name}`);
	}
}

async function run(c: Case, bytes: Buffer, chunk: number) {
	const fileCodes: string[] = [];
	const rowCodes: Record<string, string[]> = {};
	const rejected: number[] = [];
	const records = new Map<number, Record<string, unknown>>();
	let stats: CheckStats | undefined;
	const all: Finding[] = [];
	for await (const e of checkFile(chunked(bytes, chunk), c.format, ctx, { sheet: c.sheet }) as AsyncIterable<CheckEvent>) {
		if (e.kind === 'file-finding') {
			fileCodes.push(e.finding.code);
			all.push(e.finding);
		} else if (e.kind === 'row') {
			if (e.findings.length) rowCodes[String(e.row)] = e.findings.map((f) => f.code).sort();
			all.push(...e.findings);
			if (e.record) records.set(e.row, e.record);
			else rejected.push(e.row);
		} else if (e.kind === 'end') stats = e.stats;
	}
	return { fileCodes: fileCodes.sort(), rowCodes, rejected, records, stats: stats!, all };
}

describe('bad-input corpus', () => {
	it('has at least 30 cases, each committed file listed once per option set', () => {
		expect(manifest.cases.length).toBeGreaterThanOrEqual(30);
		for (const c of manifest.cases) expect(c.file ?? c.generate).toBeTruthy();
	});

	it.each(manifest.cases.map((c) => [c.file ?? `(generated) ${c.generate}`, c.sheet ? `sheet=${c.sheet}` : '', c] as const))(
		'%s %s',
		{ timeout: 60_000 },
		async (_name, _opt, c) => {
			const bytes = c.file ? readFileSync(path.join(DIR, c.file)) : generate(c.generate!);
			// Whole, and in awkward 7-byte chunks for the small text files.
			const sizes = bytes.length < 64 * 1024 && c.format !== 'xlsx' ? [bytes.length || 1, 7] : [64 * 1024];
			for (const size of sizes) {
				const r = await run(c, bytes, size);
				expect(r.fileCodes, `${c.covers} — file codes`).toEqual([...c.file_codes].sort());
				expect(r.rowCodes, `${c.covers} — row codes`).toEqual(c.row_codes);
				expect(r.rejected, `${c.covers} — rejected rows`).toEqual(c.rejected_rows);
				expect(r.stats.accepted).toBe(c.accepted);
				expect(r.stats.rejected).toBe(c.rejected_rows.length);
				expect(r.stats.findings.total).toBe(r.all.length);
				// Every finding is complete and plain; personal values never appear.
				for (const f of r.all) {
					expect(f.message.length).toBeGreaterThan(10);
					if (f.column === 'operator_name' || f.column === 'latitude' || f.column === 'longitude')
						expect([null, '[personal]']).toContain(f.value);
				}
				for (const [row, expected] of Object.entries(c.values ?? {})) expect(r.records.get(Number(row))).toMatchObject(expected);
			}
		}
	);
});
