// The bad-input corpus (tests/fixtures/bad/manifest.json): every file goes through readRows and the
// checker (checkFile) and must give exactly the findings its manifest lists — and never throw.
import { describe, expect, it } from 'vitest';
import type { Finding } from '../../src/lib/schema/findings';
import { checkFile, type CheckEvent, type CheckStats } from '../../src/lib/server/ingest/check-file';
import { offlineCheckContext } from '../../src/lib/server/ingest/context';
import { caseBytes, caseRows, corpus as manifest, type CorpusCase as Case } from '../helpers/bad-corpus';
import { chunked } from './helpers/read';

const ctx = offlineCheckContext({
	stateFips: manifest.context.state_fips,
	districtCounties: new Set(manifest.context.district_counties),
	today: manifest.context.today
});

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

	it.each(caseRows())('%s %s', { timeout: 60_000 }, async (_name, _opt, c) => {
		const bytes = caseBytes(c);
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
	});
});
