// The bad-input corpus (tests/fixtures/bad/manifest.json), shared by the tests that run it: its manifest,
// each case's bytes (a committed file, or made here by its generator) and each case's test name.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import type { RowFormat } from '../../src/lib/server/ingest/read-rows';
import { makeZip, MINIMAL_PARTS } from '../unit/helpers/zip';

export const CORPUS_DIR = path.resolve(import.meta.dirname, '..', 'fixtures', 'bad');

export interface CorpusCase {
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

export const corpus = JSON.parse(readFileSync(path.join(CORPUS_DIR, 'manifest.json'), 'utf8')) as {
	context: { state_fips: string; district_counties: string[]; today: string };
	cases: CorpusCase[];
};

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

/**
 * The generated cases: too big (or too dangerous) to commit. A generator the corpus names but this
 * function does not know is an error, so no case is ever skipped.
 */
export function generateCase(name: string): Buffer {
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
			throw new Error(`the corpus has a generated case the tests do not know: ${name}`);
	}
}

/** The bytes of a case: its committed file, or what its generator makes. */
export function caseBytes(c: CorpusCase): Buffer {
	return c.file ? readFileSync(path.join(CORPUS_DIR, c.file)) : generateCase(c.generate!);
}

/** A case's name: its file (or generator) and, apart, the sheet it is read with. */
export const caseName = (c: CorpusCase) => c.file ?? `(generated) ${c.generate}`;
export const caseOption = (c: CorpusCase) => (c.sheet ? `sheet=${c.sheet}` : '');

/** The rows for `it.each(…)('%s %s', …)`: name, option, case. */
export const caseRows = () => corpus.cases.map((c) => [caseName(c), caseOption(c), c] as const);
