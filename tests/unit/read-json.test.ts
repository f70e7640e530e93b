// NDJSON and JSON-array reading, streamed in awkward chunks.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { JsonArraySplitter } from '../../src/lib/server/ingest/json-array';
import { readRows } from '../../src/lib/server/ingest/read-rows';
import { chunked, collect, findingsOf, rows } from './helpers/read';

const b = (s: string) => Buffer.from(s, 'utf8');

describe('NDJSON', () => {
	it('numbers rows by line, skips blank lines, handles CRLF and a last line without newline', async () => {
		const ev = await collect(readRows(chunked(b('{"a":1}\r\n\n{"a":"é𝄞"}\n{"a":3}')), 'ndjson'));
		expect(ev[0]).toEqual({ kind: 'source', encoding: 'utf-8', sheet: null });
		expect(rows(ev).map((r) => [r.row, r.values])).toEqual([
			[1, { a: 1 }],
			[3, { a: 'é𝄞' }],
			[4, { a: 3 }]
		]);
	});

	it.each([1, 2, 3, 7])('gives the same rows in %i-byte chunks', async (size) => {
		const text = '{"notes":"Café — “x”, 𝄞"}\n{"n":2}\n';
		expect(rows(await collect(readRows(chunked(b(text), size), 'ndjson'))).map((r) => r.values)).toEqual([
			{ notes: 'Café — “x”, 𝄞' },
			{ n: 2 }
		]);
	});

	it('reports a broken line as a rejected row and reads on', async () => {
		const ev = await collect(readRows(chunked(b('{"a":1}\n{"a":2,\n{"a":3}\n[1,2]\n"x"\n')), 'ndjson'));
		expect(rows(ev).map((r) => r.row)).toEqual([1, 3]);
		expect(findingsOf(ev).map((f) => [f.code, f.row, f.severity])).toEqual([
			['ndjson-bad-line', 2, 'error'],
			['not-an-object', 4, 'error'],
			['not-an-object', 5, 'error']
		]);
	});

	it('skips a line over the size limit without buffering it', async () => {
		const ev = await collect(
			readRows(chunked(b(`{"a":1}\n{"a":"${'x'.repeat(5000)}"}\n{"a":3}\n`), 100), 'ndjson', { limits: { maxRowChars: 1000 } })
		);
		expect(rows(ev).map((r) => r.row)).toEqual([1, 3]);
		expect(findingsOf(ev).map((f) => [f.code, f.row])).toEqual([['row-too-large', 2]]);
	});

	it('reports an empty file and a file of blank lines', async () => {
		expect(findingsOf(await collect(readRows(chunked(b('')), 'ndjson'))).map((f) => f.code)).toEqual(['empty-file']);
		expect(findingsOf(await collect(readRows(chunked(b('\n\n  \n')), 'ndjson'))).map((f) => f.code)).toEqual(['no-rows']);
	});

	it('keeps 1e400 as the number JSON makes of it (Infinity) for the checker to refuse', async () => {
		const r = rows(await collect(readRows(chunked(b('{"extent_acres":1e400}\n')), 'ndjson')));
		expect(r[0].values.extent_acres).toBe(Infinity);
	});
});

describe('JSON array', () => {
	it('streams the elements with their positions, across chunks past the first 4 KB', async () => {
		const big = JSON.stringify({ pad: 'é𝄞'.repeat(2000) });
		const doc = ' [\n {"a":"x]}\\"[{"},\n {"b":[1,{"c":2}]} , {"c":null}, ' + big + ', ' + big + '\n]\n';
		for (const size of [1, 2, 5, 1000]) {
			const ev = await collect(readRows(chunked(b(doc), size), 'json'));
			expect(rows(ev).map((r) => [r.row, r.values])).toEqual([
				[1, { a: 'x]}"[{' }],
				[2, { b: [1, { c: 2 }] }],
				[3, { c: null }],
				[4, JSON.parse(big)],
				[5, JSON.parse(big)]
			]);
			expect(findingsOf(ev)).toEqual([]);
		}
	});

	it('refuses a document that is not an array', async () => {
		for (const doc of ['{"a":1}', '"text"', '42', 'null']) {
			expect(findingsOf(await collect(readRows(chunked(b(doc)), 'json'))).map((f) => [f.code, f.row])).toEqual([
				['json-not-an-array', null]
			]);
		}
	});

	it('reports elements that are not objects as rejected rows', async () => {
		const ev = await collect(readRows(chunked(b('[{"a":1}, 2, "x", [1], null, {"a":2}]')), 'json'));
		expect(rows(ev).map((r) => r.row)).toEqual([1, 6]);
		expect(findingsOf(ev).map((f) => [f.code, f.row])).toEqual([
			['not-an-object', 2],
			['not-an-object', 3],
			['not-an-object', 4],
			['not-an-object', 5]
		]);
	});

	it('stops with a file-level error at broken array syntax, after the good elements', async () => {
		for (const [doc, code] of [
			['[{"a":1} {"a":2}]', 'json-syntax'],
			['[{"a":1},]', 'json-syntax'],
			['[{"a":1},,{"a":2}]', 'json-syntax'],
			['[{"a":1}', 'json-syntax'],
			['[{"a":1}] trailing', 'json-syntax']
		]) {
			const ev = await collect(readRows(chunked(b(doc), 3), 'json'));
			expect(
				rows(ev).map((r) => r.row),
				doc
			).toEqual([1]);
			expect(
				findingsOf(ev).map((f) => [f.code, f.row]),
				doc
			).toEqual([[code, null]]);
		}
	});

	it('reports an element that is invalid JSON inside as a rejected row', async () => {
		const ev = await collect(readRows(chunked(b('[{"a":1}, {"a": NaN}, {"a":3}]')), 'json'));
		expect(rows(ev).map((r) => r.row)).toEqual([1, 3]);
		expect(findingsOf(ev).map((f) => [f.code, f.row])).toEqual([['json-syntax', 2]]);
	});

	it('skips an oversized element and drops an oversized value', async () => {
		const ev = await collect(
			readRows(chunked(b(`[{"a":"${'x'.repeat(3000)}"}, {"a":"${'y'.repeat(300)}","b":1}]`), 64), 'json', {
				limits: { maxRowChars: 1000, maxCellChars: 100 }
			})
		);
		expect(findingsOf(ev).map((f) => [f.code, f.row])).toEqual([['row-too-large', 1]]);
		const r = rows(ev);
		expect(r[0]).toMatchObject({ row: 2, values: { b: 1 } });
		expect(r[0].findings?.map((f) => [f.code, f.column])).toEqual([['cell-too-large', 'a']]);
	});

	it('reports an empty document and an empty array', async () => {
		expect(findingsOf(await collect(readRows(chunked(b('')), 'json'))).map((f) => f.code)).toEqual(['empty-file']);
		expect(findingsOf(await collect(readRows(chunked(b('   ')), 'json'))).map((f) => f.code)).toEqual(['empty-file']);
		expect(findingsOf(await collect(readRows(chunked(b('[ ]')), 'json'))).map((f) => [f.code, f.severity])).toEqual([
			['no-rows', 'warning']
		]);
	});
});

describe('JsonArraySplitter (property)', () => {
	it('splits any array of JSON values, cut anywhere, into exactly its elements', () => {
		fc.assert(
			fc.property(fc.array(fc.jsonValue(), { maxLength: 8 }), fc.array(fc.integer({ min: 1, max: 9 }), { minLength: 1 }), (arr, cuts) => {
				const text = JSON.stringify(arr, null, cuts[0] % 3);
				const s = new JsonArraySplitter(1_000_000);
				const out: unknown[] = [];
				let i = 0;
				let k = 0;
				while (i < text.length) {
					const n = cuts[k++ % cuts.length];
					for (const e of s.push(text.slice(i, i + n))) {
						expect(e.kind).toBe('element');
						if (e.kind === 'element') out.push(JSON.parse(e.text));
					}
					i += n;
				}
				expect(s.end()).toEqual([]);
				expect(out).toEqual(JSON.parse(text));
			}),
			{ numRuns: 300 }
		);
	});
});
