// Everything generated from the one record schema: JSON Schema, OpenAPI component, data dictionary,
// CSV and XLSX templates — and a filled-in XLSX template read back through the reader and checker.
import ExcelJS from 'exceljs';
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { PRACTICE_CATALOG } from '../../src/lib/domain/practice-catalog';
import { createRecordChecker } from '../../src/lib/schema/check-records';
import { columnNote, dataDictionary } from '../../src/lib/schema/dictionary';
import { practiceRecordJsonSchema, PRACTICE_RECORD_SCHEMA_ID } from '../../src/lib/schema/json-schema';
import { buildOpenApiDocument } from '../../src/lib/schema/openapi';
import {
	COLUMN_INFO,
	columnSchema,
	PERSONAL_COLUMNS,
	PRACTICE_RECORD_COLUMNS,
	PracticeRecordV1InputSchema,
	SCHEMA_VERSION,
	UNPUBLISHED_COLUMNS
} from '../../src/lib/schema/practice-record';
import { csvTemplate } from '../../src/lib/schema/templates';
import { readRows, type RowEvent } from '../../src/lib/server/ingest/read-rows';
import { stateCountyList } from '../../src/lib/server/ingest/reference';
import { buildXlsxTemplateWorkbook, TEMPLATE_ROWS, xlsxTemplate } from '../../src/lib/server/ingest/template-xlsx';
import { chunked, collect, rows } from './helpers/read';

// The columns of schema v1, exactly as the intake issue lists them.
const ISSUE_COLUMNS = [
	'local_id',
	'practice_code',
	'county_fips',
	'installed_on',
	'status',
	'withdrawn_on',
	'extent_acres',
	'drainage_area_acres',
	'field_id',
	'operation_id',
	'operator_name',
	'latitude',
	'longitude',
	'huc12',
	'cost_total_usd',
	'cost_share_usd',
	'funding_program',
	'notes',
	'bed_length_ft',
	'bed_width_ft',
	'bed_depth_ft',
	'drainage_coefficient_in_per_day',
	'main_diameter_in',
	'main_slope_pct',
	'media_porosity',
	'cover_species',
	'control_structures'
];

describe('the schema module', () => {
	it('has exactly the columns of the issue, in order, version 1', () => {
		expect(PRACTICE_RECORD_COLUMNS).toEqual(ISSUE_COLUMNS);
		expect(SCHEMA_VERSION).toBe('1');
	});

	it('marks operator name and coordinates personal, and never publishes them, ids or notes', () => {
		expect(PERSONAL_COLUMNS).toEqual(['operator_name', 'latitude', 'longitude']);
		expect(UNPUBLISHED_COLUMNS).toEqual(['local_id', 'field_id', 'operation_id', 'operator_name', 'latitude', 'longitude', 'notes']);
	});

	it('gives every column a title, description and example that its own rule accepts', () => {
		for (const c of PRACTICE_RECORD_COLUMNS) {
			const info = COLUMN_INFO[c];
			expect(info.title.length, c).toBeGreaterThan(2);
			expect(info.description.length, c).toBeGreaterThan(20);
			expect(columnSchema(c).safeParse(info.example).success, `${c} example ${info.example}`).toBe(true);
		}
	});

	it('the examples together make a valid record for the checker (practice 605 with its details)', () => {
		const values = Object.fromEntries(PRACTICE_RECORD_COLUMNS.map((c) => [c, COLUMN_INFO[c].example]));
		const r = createRecordChecker({ stateFips: '19', districtCounties: null, today: '2030-01-01' }).row(
			{ ...values, status: 'installed', withdrawn_on: null, cover_species: null, control_structures: null },
			2
		);
		expect(r.findings.filter((f) => f.severity === 'error')).toEqual([]);
		expect(r.record?.practice_code).toBe('605');
	});
});

describe('JSON Schema', () => {
	const s = practiceRecordJsonSchema() as Record<string, unknown> & { properties: Record<string, Record<string, unknown>> };

	it('is draft 2020-12 with $id, version, the columns and the four required ones', () => {
		expect(s.$schema).toBe('https://json-schema.org/draft/2020-12/schema');
		expect(s.$id).toBe(PRACTICE_RECORD_SCHEMA_ID);
		expect(s.version).toBe('1');
		expect(Object.keys(s.properties)).toEqual(ISSUE_COLUMNS);
		expect(s.required).toEqual(['local_id', 'practice_code', 'county_fips', 'installed_on']);
		expect(s.additionalProperties).toBe(false);
	});

	it('carries the constraints and metadata of the zod schema', () => {
		const acres = s.properties.extent_acres;
		expect(acres.anyOf).toEqual([{ type: 'number', exclusiveMinimum: 0, maximum: 1_000_000, multipleOf: 0.01 }, { type: 'null' }]);
		expect(acres['x-unit']).toBe('acres');
		expect(s.properties.operator_name['x-personal']).toBe(true);
		expect(s.properties.notes['x-published']).toBe(false);
		expect(s.properties.county_fips.pattern).toBe('^\\d{5}$');
		expect(s.properties.installed_on.format).toBe('date');
		expect(s.properties.practice_code.enum).toEqual(PRACTICE_CATALOG.map((p) => p.code));
	});

	it('states the per-practice requirement from the catalog as if/then rules', () => {
		const allOf = s.allOf as Array<{ if: { properties: Record<string, { enum?: string[] }> }; then: { required: string[] } }>;
		const edge = allOf.find((r) => r.then.required[0] === 'drainage_area_acres');
		expect(edge?.if.properties.practice_code.enum).toEqual(['410', '554', '587', '604', '605', '638', '656', '657']);
		const inField = allOf.find((r) => r.then.required[0] === 'extent_acres');
		expect(inField?.if.properties.practice_code.enum).toContain('340');
		expect(allOf.find((r) => r.then.required[0] === 'withdrawn_on')).toBeDefined();
	});

	it('is what zod itself generates for the input schema (one source)', () => {
		const fromZod = z.toJSONSchema(PracticeRecordV1InputSchema) as Record<string, unknown>;
		expect(s.properties).toEqual(fromZod.properties);
	});
});

describe('OpenAPI 3.1', () => {
	const doc = buildOpenApiDocument();
	it('registers the record schema as exactly the published JSON Schema', () => {
		const { $schema: _a, $id: _b, ...rest } = practiceRecordJsonSchema();
		expect(doc.components?.schemas?.PracticeRecordV1).toEqual(rest);
	});
	it('documents the health, identity and schema paths, with problem responses and bearer auth', () => {
		expect(doc.openapi).toBe('3.1.0');
		expect(Object.keys(doc.paths ?? {})).toEqual(
			expect.arrayContaining([
				'/api/v1/health',
				'/api/v1/me',
				'/api/v1/openapi.json',
				'/api/v1/schema/practice-record.json',
				'/api/v1/schema/practice-record.csv',
				'/api/v1/schema/practice-record.xlsx'
			])
		);
		expect(doc.components?.securitySchemes?.bearerAuth).toMatchObject({ type: 'http', scheme: 'bearer' });
		expect(JSON.stringify(doc.paths?.['/api/v1/me'])).toContain('#/components/schemas/Problem');
	});
});

describe('data dictionary', () => {
	it('lists every column once, in groups, with rules in words', () => {
		const cols = dataDictionary().flatMap((g) => g.columns.map((c) => c.name));
		expect([...cols].sort()).toEqual([...ISSUE_COLUMNS].sort());
		const acres = dataDictionary()
			.flatMap((g) => g.columns)
			.find((c) => c.name === 'extent_acres')!;
		expect(acres.rules).toEqual(expect.arrayContaining(['greater than 0', 'at most 2 decimals']));
		expect(acres.required).toMatch(/^Required for practices 327, /);
		expect(columnNote('latitude')).toMatch(/Personal information: never published/);
	});
});

describe('templates', () => {
	it('CSV: the header row in column order', () => {
		expect(csvTemplate()).toBe(ISSUE_COLUMNS.join(',') + '\r\n');
	});

	it('XLSX: read back with exceljs — headers, notes, drop-downs and validations', { timeout: 60_000 }, async () => {
		const counties = stateCountyList('19');
		const bytes = await xlsxTemplate({ stateFips: '19', counties, created: new Date('2026-01-01T00:00:00Z') });
		const wb = new ExcelJS.Workbook();
		await wb.xlsx.load(bytes as unknown as ArrayBuffer);
		expect(wb.worksheets.map((w) => [w.name, w.state])).toEqual([
			['Records', 'visible'],
			['Columns', 'visible'],
			['Lists', 'hidden']
		]);
		const ws = wb.getWorksheet('Records')!;
		expect((ws.getRow(1).values as unknown[]).slice(1)).toEqual(ISSUE_COLUMNS);
		expect(String(ws.getCell('G1').note)).toMatch(/Unit: acres/);
		const dv = (a: string) =>
			ws.getCell(a).dataValidation as { type: string; formulae: unknown[]; operator?: string; allowBlank?: boolean };
		// practice code and county: lists on the hidden sheet
		expect(dv('B2')).toMatchObject({ type: 'list', formulae: [`Lists!$A$2:$A$${PRACTICE_CATALOG.length + 1}`] });
		expect(dv(`C${TEMPLATE_ROWS + 1}`)).toMatchObject({ type: 'list', formulae: [`Lists!$D$2:$D$${counties.length + 1}`] });
		expect(dv('E2')).toMatchObject({ type: 'list', formulae: ['"installed,withdrawn"'] });
		// dates: a real date, not after today
		expect(dv('D2').type).toBe('custom');
		expect(String(dv('D2').formulae[0])).toContain('TODAY()');
		// numbers: acres > 0, whole number of control structures, latitude range
		expect(dv('G2')).toMatchObject({ type: 'decimal', operator: 'between', allowBlank: true });
		expect(dv('AA2')).toMatchObject({ type: 'whole', formulae: [1, 1000] });
		expect(dv('L2')).toMatchObject({ type: 'decimal', formulae: [-90, 90] });
		expect(dv('R2')).toMatchObject({ type: 'textLength', formulae: [2000] });
		expect(ws.getCell(`G${TEMPLATE_ROWS + 2}`).dataValidation).toBeUndefined();
		// county codes stay text (leading zeros survive)
		expect(ws.getColumn(3).numFmt).toBe('@');
		const lists = wb.getWorksheet('Lists')!;
		expect(lists.getCell('A2').value).toBe(PRACTICE_CATALOG[0].code);
		expect(lists.getCell('D2').value).toBe(counties[0].fips);
		const dict = wb.getWorksheet('Columns')!;
		expect(dict.getCell('A2').value).toBe('local_id');
	});

	it('XLSX: a filled-in template goes through the reader and checker cleanly', async () => {
		const wb = buildXlsxTemplateWorkbook({ stateFips: '19', counties: stateCountyList('19') });
		const ws = wb.getWorksheet('Records')!;
		const set = (col: string, v: unknown) => (ws.getCell(`${col}2`).value = v as ExcelJS.CellValue);
		set('A', 'T-1');
		set('B', '605');
		set('C', '19169');
		set('D', new Date(Date.UTC(2025, 4, 20)));
		set('H', 48.5);
		set('S', 120);
		const bytes = Buffer.from(await wb.xlsx.writeBuffer());
		const ev = await collect(readRows(chunked(bytes, 4096), 'xlsx'));
		expect(ev[0]).toMatchObject({ kind: 'source', sheet: 'Records' });
		const checker = createRecordChecker({ stateFips: '19', districtCounties: new Set(['19169']), today: '2026-01-01' });
		expect(checker.header((ev[1] as Extract<RowEvent, { kind: 'header' }>).columns)).toEqual([]);
		const r = rows(ev);
		expect(r).toHaveLength(1);
		const res = checker.row(r[0].values, r[0].row);
		expect(res.findings).toEqual([]);
		expect(res.record).toMatchObject({
			local_id: 'T-1',
			practice_code: '605',
			installed_on: '2025-05-20',
			drainage_area_acres: 48.5,
			bed_length_ft: 120
		});
	});
});
