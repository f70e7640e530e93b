// XLSX reading through exceljs's streaming reader, and the ZIP checks in front of it.
import ExcelJS from 'exceljs';
import { mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { createRecordChecker } from '../../src/lib/schema/check-records';
import { defaultLimits, readRows, type RowEvent } from '../../src/lib/server/ingest/read-rows';
import { inspectZip } from '../../src/lib/server/ingest/zip-guard';
import { chunked, collect, findingsOf, rows } from './helpers/read';
import { makeZip, MINIMAL_PARTS, WORKBOOK_RELS } from './helpers/zip';

async function workbook(build: (wb: ExcelJS.Workbook) => void): Promise<Buffer> {
	const wb = new ExcelJS.Workbook();
	build(wb);
	return Buffer.from(await wb.xlsx.writeBuffer());
}

const read = async (bytes: Buffer, opts: Parameters<typeof readRows>[2] = {}, size?: number) =>
	collect(readRows(chunked(bytes, size), 'xlsx', opts));

describe('XLSX rows', () => {
	it('reads the first sheet by default, with sheet row numbers and typed cells', async () => {
		const bytes = await workbook((wb) => {
			const ws = wb.addWorksheet('Records');
			ws.addRow(['local_id', 'installed_on', 'extent_acres', 'county_fips', 'notes']);
			ws.addRow(['A-1', new Date(Date.UTC(2024, 9, 15)), 12.5, 19153, 'plain']);
			ws.addRow([]);
			ws.addRow(['A-2', '2024-10-16', 3, '19169', { richText: [{ text: 'rich ' }, { text: 'text', font: { bold: true } }] }]);
			wb.addWorksheet('Other').addRow(['nothing']);
		});
		const ev = await read(bytes, {}, 1000);
		expect(ev[0]).toEqual({ kind: 'source', encoding: 'utf-8', sheet: 'Records' });
		expect(ev[1]).toEqual({ kind: 'header', columns: ['local_id', 'installed_on', 'extent_acres', 'county_fips', 'notes'], row: 1 });
		const r = rows(ev);
		expect(r.map((x) => x.row)).toEqual([2, 4]);
		expect(r[0].values.installed_on).toBeInstanceOf(Date);
		expect(r[0].values).toMatchObject({ local_id: 'A-1', extent_acres: 12.5, county_fips: 19153 });
		expect(r[1].values.notes).toBe('rich text');
	});

	it('reads the sheet that is first in tab order, even when it is not sheet1.xml', async () => {
		const ns = 'xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"';
		const r = 'xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"';
		const sheet = (text: string) =>
			Buffer.from(
				`<?xml version="1.0"?><worksheet ${ns}><sheetData><row r="1"><c r="A1" t="inlineStr"><is><t>${text}</t></is></c></row><row r="2"><c r="A2" t="inlineStr"><is><t>${text}-row</t></is></c></row></sheetData></worksheet>`
			);
		const bytes = makeZip([
			MINIMAL_PARTS[0],
			{
				name: 'xl/workbook.xml',
				data: Buffer.from(
					`<?xml version="1.0"?><workbook ${ns} ${r}><sheets><sheet name="Data" sheetId="2" r:id="rId2"/><sheet name="Notes" sheetId="1" r:id="rId1"/></sheets></workbook>`
				)
			},
			{
				name: 'xl/_rels/workbook.xml.rels',
				data: Buffer.from(
					'<?xml version="1.0"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"><Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet" Target="worksheets/sheet1.xml"/><Relationship Id="rId2" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet" Target="worksheets/sheet2.xml"/></Relationships>'
				)
			},
			{ name: 'xl/worksheets/sheet1.xml', data: sheet('notes') },
			{ name: 'xl/worksheets/sheet2.xml', data: sheet('data') }
		]);
		const ev = await read(bytes);
		expect(ev[0]).toEqual({ kind: 'source', encoding: 'utf-8', sheet: 'Data' });
		expect(rows(ev).map((x) => x.values)).toEqual([{ data: 'data-row' }]);
		const notes = await read(bytes, { sheet: 'Notes' });
		expect(rows(notes).map((x) => x.values)).toEqual([{ notes: 'notes-row' }]);
	});

	it('reads sheets stored before the shared strings, styles and workbook parts, with no temporary files', async () => {
		// Writers may store the sheets first and xl/workbook.xml last. Every sheet here uses shared strings
		// and a date style stored after it; the reader must still read both sheets right, and leave nothing
		// behind in the temporary folder (exceljs spools such sheets to tmp-<pid>-… files of its own).
		const ns = 'xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"';
		const r = 'xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"';
		const sheet = (first: number) =>
			Buffer.from(
				`<?xml version="1.0"?><worksheet ${ns}><sheetData><row r="1"><c r="A1" t="s"><v>${first}</v></c><c r="B1" t="s"><v>2</v></c></row>` +
					`<row r="2"><c r="A2" t="s"><v>${first + 3}</v></c><c r="B2" s="1"><v>45351</v></c></row></sheetData></worksheet>`
			);
		const strings = ['local_id', 'note', 'installed_on', 'A-1', 'note-row'];
		const bytes = makeZip([
			MINIMAL_PARTS[0],
			{
				name: 'xl/_rels/workbook.xml.rels',
				data: Buffer.from(
					'<?xml version="1.0"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"><Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet" Target="worksheets/sheet1.xml"/><Relationship Id="rId2" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet" Target="worksheets/sheet2.xml"/></Relationships>'
				)
			},
			{ name: 'xl/worksheets/sheet1.xml', data: sheet(1) },
			{ name: 'xl/worksheets/sheet2.xml', data: sheet(0) },
			{
				name: 'xl/sharedStrings.xml',
				data: Buffer.from(
					`<?xml version="1.0"?><sst ${ns} count="5" uniqueCount="5">${strings.map((t) => `<si><t>${t}</t></si>`).join('')}</sst>`
				)
			},
			{
				name: 'xl/styles.xml',
				data: Buffer.from(
					`<?xml version="1.0"?><styleSheet ${ns}><fonts count="1"><font/></fonts><fills count="1"><fill/></fills><borders count="1"><border/></borders>` +
						'<cellXfs count="2"><xf numFmtId="0"/><xf numFmtId="14" applyNumberFormat="1"/></cellXfs></styleSheet>'
				)
			},
			{
				name: 'xl/workbook.xml',
				data: Buffer.from(
					`<?xml version="1.0"?><workbook ${ns} ${r}><sheets><sheet name="Notes" sheetId="1" r:id="rId1"/><sheet name="Records" sheetId="2" r:id="rId2"/></sheets></workbook>`
				)
			}
		]);
		const ours = () => new Set(readdirSync(os.tmpdir()).filter((n) => n.startsWith(`tmp-${process.pid}-`)));
		const before = ours();
		const records = await read(bytes, { sheet: 'Records' });
		expect(records[0]).toMatchObject({ sheet: 'Records' });
		expect(records[1]).toMatchObject({ kind: 'header', columns: ['local_id', 'installed_on'] });
		const [row] = rows(records);
		expect(row.values.local_id).toBe('A-1');
		// 45351 days after 1899-12-30 (the spreadsheet epoch, ECMA-376 Part 1 §18.17.4.1) is 2024-02-29.
		expect(row.values.installed_on).toEqual(new Date(Date.UTC(2024, 1, 29)));
		const notes = await read(bytes);
		expect(notes[0]).toMatchObject({ sheet: 'Notes' });
		expect(rows(notes).map((x) => x.values.note)).toEqual(['note-row']);
		expect([...ours()].filter((n) => !before.has(n))).toEqual([]);
	});

	it('reads a named sheet, and says which sheets exist when the name is wrong', async () => {
		const bytes = await workbook((wb) => {
			wb.addWorksheet('Cover').addRow(['title']);
			const ws = wb.addWorksheet('2025 records');
			ws.addRow(['Records sent to the hub']);
			ws.addRow([]);
			ws.addRow(['local_id', 'practice_code']);
			ws.addRow(['X-1', '340']);
		});
		// the header is the first non-empty row: here the title row on row 1
		const named = await read(bytes, { sheet: '2025 records' });
		expect(named[0]).toMatchObject({ sheet: '2025 records' });
		expect(rows(named).map((r) => r.row)).toEqual([3, 4]);
		const missing = findingsOf(await read(bytes, { sheet: 'Sheet9' }));
		expect(missing).toHaveLength(1);
		expect(missing[0]).toMatchObject({ code: 'sheet-not-found', row: null, severity: 'error' });
		expect(missing[0].message).toContain('"Cover", "2025 records"');
	});

	it('reads a formula as its formula text, never its result, and the checker flags it', async () => {
		const bytes = await workbook((wb) => {
			const ws = wb.addWorksheet('R');
			ws.addRow(['local_id', 'practice_code', 'county_fips', 'installed_on', 'extent_acres', 'notes']);
			ws.addRow([
				'F-1',
				'340',
				'19153',
				'2024-01-02',
				{ formula: 'B2*1000', result: 340000 },
				{ formula: 'HYPERLINK("http://example.org","click")', result: 'click' }
			]);
			ws.addRow(['F-2', '340', '19153', '2024-01-02', 10, { text: 'a link', hyperlink: 'http://example.org' }]);
		});
		const ev = await read(bytes);
		const r = rows(ev);
		expect(r[0].values.extent_acres).toBe('=B2*1000');
		expect(r[0].values.notes).toBe('=HYPERLINK("http://example.org","click")');
		expect(r[1].values.notes).toBe('a link');
		const checker = createRecordChecker({ stateFips: '19', districtCounties: null, today: '2026-01-01' });
		checker.header((ev[1] as Extract<RowEvent, { kind: 'header' }>).columns);
		const res = checker.row(r[0].values, r[0].row);
		expect(res.record).toBeNull();
		expect(res.findings.filter((f) => f.code === 'formula-in-cell').map((f) => [f.cell, f.severity])).toEqual([
			['E2', 'error'],
			['F2', 'warning']
		]);
	});

	it('gives a spreadsheet date cell to the checker as the right calendar date', async () => {
		const bytes = await workbook((wb) => {
			const ws = wb.addWorksheet('R');
			ws.addRow(['local_id', 'practice_code', 'county_fips', 'installed_on', 'extent_acres']);
			const row = ws.addRow(['D-1', '340', '19153', new Date(Date.UTC(2024, 1, 29)), 10]);
			row.getCell(4).numFmt = 'm/d/yyyy';
		});
		const ev = await read(bytes);
		const checker = createRecordChecker({ stateFips: '19', districtCounties: null, today: '2026-01-01' });
		checker.header((ev[1] as Extract<RowEvent, { kind: 'header' }>).columns);
		expect(checker.row(rows(ev)[0].values, 2).record?.installed_on).toBe('2024-02-29');
	});

	it('ignores values in columns without a header, with a warning naming the cell', async () => {
		const bytes = await workbook((wb) => {
			const ws = wb.addWorksheet('R');
			ws.addRow(['a', 'b']);
			ws.addRow(['1', '2', 'stray']);
		});
		const r = rows(await read(bytes));
		expect(r[0].values).toEqual({ a: '1', b: '2' });
		expect(r[0].findings?.[0]).toMatchObject({ code: 'cell-without-header', cell: 'C2', severity: 'warning' });
	});

	it('drops an oversized cell with a finding', async () => {
		const bytes = await workbook((wb) => {
			const ws = wb.addWorksheet('R');
			ws.addRow(['a', 'notes']);
			ws.addRow(['1', 'y'.repeat(5000)]);
		});
		const r = rows(await read(bytes, { limits: { maxCellChars: 1000 } }));
		expect(r[0].values).toEqual({ a: '1' });
		expect(r[0].findings?.[0]).toMatchObject({ code: 'cell-too-large', cell: 'B2', column: 'notes' });
	});

	it('reports an empty sheet and a header-only sheet', async () => {
		const empty = await workbook((wb) => void wb.addWorksheet('R'));
		expect(findingsOf(await read(empty)).map((f) => f.code)).toEqual(['empty-file']);
		const headerOnly = await workbook((wb) => void wb.addWorksheet('R').addRow(['local_id']));
		expect(findingsOf(await read(headerOnly)).map((f) => [f.code, f.severity])).toEqual([['no-rows', 'warning']]);
	});
});

describe('files that are not usable workbooks', () => {
	it.each([
		['plain text', 'xlsx-not-zip', Buffer.from('local_id,practice_code\n')],
		['an empty file', 'empty-file', Buffer.alloc(0)],
		[
			'an OLE compound file (password-protected or .xls)',
			'xlsx-encrypted',
			Buffer.concat([Buffer.from([0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1]), Buffer.alloc(504)])
		],
		['a ZIP that is not a workbook', 'xlsx-invalid', makeZip([{ name: 'readme.txt', data: Buffer.from('hello') }])],
		['a ZIP cut short', 'xlsx-invalid', makeZip([...MINIMAL_PARTS]).subarray(0, 120)],
		[
			'a ZIP with an encrypted entry',
			'xlsx-encrypted',
			makeZip([...MINIMAL_PARTS, { name: 'xl/worksheets/sheet1.xml', data: Buffer.from('<x/>'), flags: 1 }])
		],
		[
			'a ZIP with an entry its directory does not list',
			'xlsx-invalid',
			makeZip([...MINIMAL_PARTS, { name: 'xl/sharedStrings.xml', data: Buffer.alloc(1000), hidden: true }])
		],
		[
			'a workbook whose sheet XML is broken',
			'xlsx-invalid',
			makeZip([
				...MINIMAL_PARTS,
				WORKBOOK_RELS,
				{ name: 'xl/worksheets/sheet1.xml', data: Buffer.from('<worksheet><sheetData><row></sheetData>') }
			])
		]
	])('refuses %s with %s', async (_label, code, bytes) => {
		const f = findingsOf(await read(bytes));
		expect(f.map((x) => [x.code, x.severity, x.row])).toEqual([[code, 'error', null]]);
		expect(f[0].message.length).toBeGreaterThan(15);
	});
});

describe('zip bombs', () => {
	const dir = mkdtempSync(path.join(os.tmpdir(), 'runnel-zip-test-'));
	afterAll(() => rmSync(dir, { recursive: true, force: true }));
	const limits = { ...defaultLimits(), maxUncompressedBytes: 10 * 1024 * 1024 };
	const zeros = Buffer.alloc(50 * 1024 * 1024); // deflates to about 50 KB

	it('refuses an archive whose declared sizes pass the cap', async () => {
		const bomb = makeZip([...MINIMAL_PARTS, { name: 'xl/sharedStrings.xml', data: zeros }]);
		expect(bomb.length).toBeLessThan(200 * 1024);
		const file = path.join(dir, 'declared.xlsx');
		writeFileSync(file, bomb);
		expect(await inspectZip(file, limits)).toMatchObject({ ok: false, code: 'xlsx-too-large' });
		expect(findingsOf(await read(bomb, { limits })).map((f) => f.code)).toEqual(['xlsx-too-large']);
	});

	it('refuses an archive that lies about its sizes, stopping while inflating', async () => {
		const liar = makeZip([...MINIMAL_PARTS, { name: 'xl/sharedStrings.xml', data: zeros, declaredSize: 1000 }]);
		const file = path.join(dir, 'liar.xlsx');
		writeFileSync(file, liar);
		expect(await inspectZip(file, limits)).toMatchObject({ ok: false, code: 'xlsx-too-large' });
	});

	it('refuses an archive declaring gigabytes under the default limits, without inflating it', async () => {
		const huge = makeZip([...MINIMAL_PARTS, { name: 'xl/sharedStrings.xml', data: Buffer.alloc(10), declaredSize: 0xfffffff0 }]);
		const file = path.join(dir, 'huge.xlsx');
		writeFileSync(file, huge);
		expect(await inspectZip(file, defaultLimits())).toMatchObject({ ok: false, code: 'xlsx-too-large' });
	});

	it('refuses too many entries', async () => {
		const many = makeZip(Array.from({ length: 30 }, (_, i) => ({ name: `x${i}.xml`, data: Buffer.from('<a/>') })));
		const file = path.join(dir, 'many.xlsx');
		writeFileSync(file, many);
		expect(await inspectZip(file, { ...limits, maxZipEntries: 20 })).toMatchObject({ ok: false, code: 'xlsx-too-large' });
	});

	it('accepts a real workbook and measures it', async () => {
		const bytes = await workbook((wb) => void wb.addWorksheet('R').addRow(['a']));
		const file = path.join(dir, 'real.xlsx');
		writeFileSync(file, bytes);
		const v = await inspectZip(file, defaultLimits());
		expect(v.ok).toBe(true);
		if (v.ok) expect(v.entries.some((e) => e.name === 'xl/workbook.xml')).toBe(true);
	});
});

describe('input failures', () => {
	it('throws when the upload stream itself fails (a client hanging up), instead of blaming the workbook', async () => {
		async function* broken(): AsyncGenerator<Uint8Array> {
			yield Buffer.from([0x50, 0x4b, 0x03, 0x04]);
			throw new Error('socket hang up');
		}
		await expect(collect(readRows(broken(), 'xlsx'))).rejects.toThrow('socket hang up');
		await expect(collect(readRows(broken(), 'csv'))).rejects.toThrow('socket hang up');
		await expect(collect(readRows(broken(), 'json'))).rejects.toThrow('socket hang up');
	});
});
