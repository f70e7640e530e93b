// The hand-written CSV encoder of the research dataset writes exactly what csv-stringify writes, for random
// rows including quotes, commas, line breaks, empty and null values (fast-check).
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { DATASET_COLUMNS, type DatasetRow } from '../../src/lib/domain/anonymise';
import { csvLines, csvLinesReference } from '../../src/lib/server/dataset/encode';

const text = fc.string({ unit: fc.constantFrom('a', 'Z', ' ', ',', '"', '\n', '\r', 'é', '1', ';', "'") });
const value = fc.oneof(text, fc.constant(null), fc.double({ noNaN: true, noDefaultInfinity: true }), fc.integer());

describe('dataset CSV encoder', () => {
	it('matches csv-stringify byte for byte', () => {
		fc.assert(
			fc.property(fc.array(fc.tuple(...DATASET_COLUMNS.map(() => value)), { maxLength: 20 }), (tuples) => {
				const rows = tuples.map((t) => Object.fromEntries(DATASET_COLUMNS.map((c, i) => [c, t[i]])) as unknown as DatasetRow);
				expect(csvLines(rows)).toBe(csvLinesReference(rows));
			}),
			{ numRuns: 300 }
		);
	});
});
