// CSV reading: row numbers, ragged rows, quoting, encodings, and chunks split at awkward byte boundaries.
import { describe, expect, it } from 'vitest';
import { readRows, type RowEvent } from '../../src/lib/server/ingest/read-rows';
import { SniffingDecoder, windows1252Char } from '../../src/lib/server/ingest/decode';
import { chunked, collect, rows, findingsOf } from './helpers/read';

const csv = (s: string) => Buffer.from(s, 'utf8');

describe('CSV rows', () => {
	it('numbers rows as a spreadsheet does: header = 1, blank lines counted, multi-line cells one row', async () => {
		const ev = await collect(readRows(chunked(csv('local_id,notes\nA,one\n\nB,"two\nlines"\nC,three\n')), 'csv'));
		expect(ev[0]).toEqual({ kind: 'source', encoding: 'utf-8', sheet: null });
		expect(ev[1]).toEqual({ kind: 'header', columns: ['local_id', 'notes'], row: 1 });
		expect(rows(ev).map((r) => [r.row, r.values])).toEqual([
			[2, { local_id: 'A', notes: 'one' }],
			[4, { local_id: 'B', notes: 'two\nlines' }],
			[5, { local_id: 'C', notes: 'three' }]
		]);
	});

	it('handles CRLF and a missing final newline', async () => {
		const ev = await collect(readRows(chunked(csv('a,b\r\n1,2\r\n3,4')), 'csv'));
		expect(rows(ev).map((r) => r.values)).toEqual([
			{ a: '1', b: '2' },
			{ a: '3', b: '4' }
		]);
	});

	it('reports ragged rows: extra cells are an error naming the cell, missing ones a warning', async () => {
		const ev = await collect(readRows(chunked(csv('a,b,c\n1,2,3,4\n1,2\n1,2,3,,\n')), 'csv'));
		const r = rows(ev);
		expect(r[0].findings?.[0]).toMatchObject({ code: 'ragged-row', severity: 'error', row: 2, column_number: 4, cell: 'D2' });
		expect(r[1].findings?.[0]).toMatchObject({ code: 'ragged-row', severity: 'warning', row: 3 });
		expect(r[2].findings).toBeUndefined(); // trailing empty cells are harmless
	});

	it('stops with a file-level error at malformed quoting, naming the line', async () => {
		const ev = await collect(readRows(chunked(csv('a,b\n1,2\n3,"4"x\n5,6\n')), 'csv'));
		expect(rows(ev).map((r) => r.row)).toEqual([2]);
		const f = findingsOf(ev);
		expect(f).toHaveLength(1);
		expect(f[0]).toMatchObject({ code: 'csv-bad-quote', severity: 'error', row: null });
		expect(f[0].message).toContain('Line 3');
	});

	it('stops with a file-level error at an unclosed quote', async () => {
		const f = findingsOf(await collect(readRows(chunked(csv('a,b\n1,"2\n3,4\n')), 'csv')));
		expect(f.map((x) => x.code)).toEqual(['csv-unclosed-quote']);
	});

	it('refuses a bare quote inside an unquoted value', async () => {
		const f = findingsOf(await collect(readRows(chunked(csv('a,b\n1,8" tile\n')), 'csv')));
		expect(f.map((x) => x.code)).toEqual(['csv-bad-quote']);
	});

	it('reports an empty file, a header-only file and a semicolon-separated file', async () => {
		expect(findingsOf(await collect(readRows(chunked(csv('')), 'csv'))).map((f) => f.code)).toEqual(['empty-file']);
		expect(findingsOf(await collect(readRows(chunked(Buffer.from([0xef, 0xbb, 0xbf])), 'csv'))).map((f) => f.code)).toEqual(['empty-file']);
		expect(findingsOf(await collect(readRows(chunked(csv('\n\n')), 'csv'))).map((f) => f.code)).toEqual(['empty-file']);
		const ho = findingsOf(await collect(readRows(chunked(csv('a,b\n')), 'csv')));
		expect(ho.map((f) => [f.code, f.severity])).toEqual([['no-rows', 'warning']]);
		expect(findingsOf(await collect(readRows(chunked(csv('a;b;c\n1;2;3\n')), 'csv'))).map((f) => f.code)).toEqual(['csv-wrong-delimiter']);
	});

	it('drops a cell over the size limit with a finding, and stops at a row over the row limit', async () => {
		const big = 'x'.repeat(100);
		const ev = await collect(readRows(chunked(csv(`a,b\n1,${big}\n2,ok\n`)), 'csv', { limits: { maxCellChars: 50 } }));
		const r = rows(ev);
		expect(r[0].values).toEqual({ a: '1' });
		expect(r[0].findings?.[0]).toMatchObject({ code: 'cell-too-large', cell: 'B2', column: 'b' });
		expect(r[1].values).toEqual({ a: '2', b: 'ok' });
		const stop = await collect(readRows(chunked(csv(`a,b\n1,${big}\n2,ok\n`)), 'csv', { limits: { maxRowChars: 50 } }));
		expect(findingsOf(stop).map((f) => [f.code, f.row])).toEqual([['row-too-large', null]]);
	});

	it('refuses too many columns', async () => {
		const header = Array.from({ length: 30 }, (_, i) => `c${i}`).join(',');
		const f = findingsOf(await collect(readRows(chunked(csv(`${header}\n`)), 'csv', { limits: { maxColumns: 20 } })));
		expect(f.map((x) => x.code)).toEqual(['too-many-columns']);
	});

	it('recognises binary files sent as CSV', async () => {
		const zip = Buffer.from([0x50, 0x4b, 0x03, 0x04, 1, 2, 3, 4]);
		expect(findingsOf(await collect(readRows(chunked(zip), 'csv'))).map((f) => f.code)).toEqual(['wrong-format']);
		const ole = Buffer.from([0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1]);
		expect(findingsOf(await collect(readRows(chunked(ole), 'csv'))).map((f) => f.code)).toEqual(['wrong-format']);
		expect(findingsOf(await collect(readRows(chunked(Buffer.from('a,b\n\0\0\0')), 'csv'))).map((f) => f.code)).toEqual(['binary-file']);
	});
});

describe('encodings', () => {
	const text = 'local_id,notes\nA,"Café crème — 10 µm, “quoted” ✓ 𝄞"\n';

	it('strips a UTF-8 byte-order mark', async () => {
		const ev = await collect(readRows(chunked(Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), csv('a,b\n1,2\n')])), 'csv'));
		expect((ev[1] as Extract<RowEvent, { kind: 'header' }>).columns).toEqual(['a', 'b']);
	});

	it.each([1, 2, 3, 5, 7])('decodes UTF-8 split into %i-byte chunks (cutting inside multi-byte characters)', async (size) => {
		// past the first 4 KB, which the reader looks at in one piece to sniff the encoding
		const filler = Array.from({ length: 300 }, (_, i) => `F${i},"ïñ ${i} — ✓"\n`).join('');
		const ev = await collect(readRows(chunked(csv(text + filler + 'Z,"Café crème, 𝄞"\n'), size), 'csv'));
		const r = rows(ev);
		expect(csv(text + filler).length).toBeGreaterThan(4096 + 1000);
		expect(r[0].values).toEqual({ local_id: 'A', notes: 'Café crème — 10 µm, “quoted” ✓ 𝄞' });
		expect(r[150].values).toEqual({ local_id: 'F149', notes: 'ïñ 149 — ✓' });
		expect(r[301].values).toEqual({ local_id: 'Z', notes: 'Café crème, 𝄞' });
		expect(findingsOf(ev)).toEqual([]);
	});

	it.each(['utf16le', 'utf16be'] as const)('decodes %s with a byte-order mark, at any chunk size', async (enc) => {
		const body = Buffer.from('a,b\n1,Café 𝄞\n' + 'x,y\n'.repeat(1500) + '2,ŝ 𝄞\n', 'utf16le');
		if (enc === 'utf16be') body.swap16();
		const bom = enc === 'utf16le' ? [0xff, 0xfe] : [0xfe, 0xff];
		for (const size of [1, 3, 64]) {
			const ev = await collect(readRows(chunked(Buffer.concat([Buffer.from(bom), body]), size), 'csv'));
			expect(ev[0]).toMatchObject({ kind: 'source', encoding: enc === 'utf16le' ? 'utf-16le' : 'utf-16be' });
			const r = rows(ev);
			expect(r[0].values).toEqual({ a: '1', b: 'Café 𝄞' });
			expect(r[r.length - 1].values).toEqual({ a: '2', b: 'ŝ 𝄞' });
		}
	});

	it('decodes UTF-16LE without a byte-order mark', async () => {
		const ev = await collect(readRows(chunked(Buffer.from('a,b\n1,é\n', 'utf16le'), 4), 'csv'));
		expect(rows(ev)[0].values).toEqual({ a: '1', b: 'é' });
	});

	it('reads Windows-1252 bytes as Windows-1252 and says so once', async () => {
		// "Café – “x”" in Windows-1252: é = E9, en dash = 96, curly quotes = 93/94
		const bytes = Buffer.concat([
			csv('a,b\n1,Caf'),
			Buffer.from([0xe9, 0x20, 0x96, 0x20, 0x93]),
			csv('x'),
			Buffer.from([0x94]),
			csv('\n2,'),
			Buffer.from([0x80]),
			csv('5\n'),
			csv(Array.from({ length: 600 }, (_, i) => `${i + 10},plain\n`).join('')),
			csv('3,na'),
			Buffer.from([0xef]),
			csv('ve\n')
		]);
		for (const size of [1, 2, 1000]) {
			const ev = await collect(readRows(chunked(bytes, size), 'csv'));
			const bs = rows(ev).map((r) => r.values.b);
			expect([bs[0], bs[1], bs[bs.length - 1]]).toEqual(['Café – “x”', '€5', 'naïve']);
			const f = findingsOf(ev);
			expect(f.map((x) => [x.code, x.severity])).toEqual([['encoding-windows-1252', 'warning']]);
			expect(ev.find((e) => e.kind === 'source')).toMatchObject({ encoding: 'windows-1252' });
		}
	});

	it('keeps valid UTF-8 as UTF-8 in a file that is mostly UTF-8 with a stray Windows-1252 byte', async () => {
		const filler = csv(Array.from({ length: 600 }, (_, i) => `${i + 10},Crème ✓\n`).join(''));
		const bytes = Buffer.concat([csv('a,b\n1,Crème\n'), filler, csv('2,Caf'), Buffer.from([0xe9]), csv('\n')]);
		const ev = await collect(readRows(chunked(bytes, 3), 'csv'));
		const bs = rows(ev).map((r) => r.values.b);
		expect(bs.filter((x) => x !== 'Crème ✓')).toEqual(['Crème', 'Café']);
		expect(findingsOf(ev).map((f) => f.code)).toEqual(['encoding-windows-1252']);
	});

	// Unicode Consortium mapping file CP1252.TXT (cp1252_WinLatin1, Microsoft) and the WHATWG Encoding
	// Standard index-windows-1252 — values recalled from memory of those tables, not read in a stored
	// copy. (Node 20's own TextDecoder('windows-1252') decodes as Latin-1, so it cannot serve as a check.)
	it.each([
		[0x80, 0x20ac, 'EURO SIGN'],
		[0x85, 0x2026, 'HORIZONTAL ELLIPSIS'],
		[0x8a, 0x0160, 'LATIN CAPITAL LETTER S WITH CARON'],
		[0x91, 0x2018, 'LEFT SINGLE QUOTATION MARK'],
		[0x92, 0x2019, 'RIGHT SINGLE QUOTATION MARK'],
		[0x93, 0x201c, 'LEFT DOUBLE QUOTATION MARK'],
		[0x94, 0x201d, 'RIGHT DOUBLE QUOTATION MARK'],
		[0x96, 0x2013, 'EN DASH'],
		[0x97, 0x2014, 'EM DASH'],
		[0x99, 0x2122, 'TRADE MARK SIGN'],
		[0x9f, 0x0178, 'LATIN CAPITAL LETTER Y WITH DIAERESIS'],
		[0x81, 0x0081, 'undefined in CP1252; WHATWG maps it to U+0081'],
		[0xe9, 0x00e9, 'LATIN SMALL LETTER E WITH ACUTE (0xA0–0xFF = Latin-1)'],
		[0xa0, 0x00a0, 'NO-BREAK SPACE']
	])('maps byte 0x%s to U+%s (%s)', (byte, cp) => {
		expect(windows1252Char(byte).codePointAt(0)).toBe(cp);
	});

	it('never produces replacement characters for any byte sequence, and is chunk-size independent', () => {
		// deterministic pseudo-random bytes
		let x = 12345;
		const bytes = Uint8Array.from({ length: 5000 }, () => ((x = (x * 1103515245 + 12345) & 0x7fffffff), x & 0xff));
		const whole = (() => {
			const d = new SniffingDecoder('utf-8');
			return d.push(bytes) + d.end();
		})();
		for (const size of [1, 2, 3, 4, 17]) {
			const d = new SniffingDecoder('utf-8');
			let s = '';
			for (let i = 0; i < bytes.length; i += size) s += d.push(bytes.subarray(i, i + size));
			s += d.end();
			expect(s).toBe(whole);
		}
		expect(whole).not.toContain('\ufffd');
	});
});
