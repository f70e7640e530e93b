// Exports of a draw's sample and outcomes: CSV (csv-stringify) and XLSX (exceljs streaming writer), written
// to a stream the response sends as it is produced; visits are read a chunk at a time.
import { PassThrough, Readable } from 'node:stream';
import { stringify } from 'csv-stringify';
import ExcelJS from 'exceljs';
import { neutraliseCell } from '$lib/domain/spreadsheet-safe';
import { VISIT_OUTCOME_LABELS, type DrawView, type VisitView } from '$lib/schema/verification';
import type { Principal } from '../auth/principal';
import { getDb } from '../db';
import { logger } from '../log';
import { visitsOfDraw } from './visits';

export const XLSX_TYPE = 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet';

const COLUMNS: Array<{ key: string; header: string; width: number; value: (v: VisitView) => string | number | boolean | null }> = [
	{ key: 'visit_id', header: 'Visit', width: 8, value: (v) => Number(v.id) },
	{ key: 'fiscal_year', header: 'FY', width: 7, value: (v) => v.fiscal_year },
	{ key: 'district_code', header: 'District code', width: 10, value: (v) => v.district.code },
	{ key: 'district_name', header: 'District', width: 28, value: (v) => v.district.name },
	{ key: 'local_id', header: 'Local id', width: 16, value: (v) => v.local_id },
	{ key: 'record_id', header: 'Record', width: 9, value: (v) => Number(v.record_id) },
	{ key: 'practice_code', header: 'Practice', width: 9, value: (v) => v.practice_code },
	{ key: 'edge_of_field', header: 'Edge of field', width: 8, value: (v) => (v.edge_of_field ? 'yes' : 'no') },
	{ key: 'never_visited', header: 'Never visited before', width: 10, value: (v) => (v.never_visited ? 'yes' : 'no') },
	{ key: 'due_on', header: 'Due', width: 11, value: (v) => v.due_on },
	{ key: 'state', header: 'State', width: 9, value: (v) => v.state },
	{ key: 'outcome', header: 'Outcome', width: 20, value: (v) => (v.outcome ? VISIT_OUTCOME_LABELS[v.outcome] : null) },
	{ key: 'visited_on', header: 'Visited on', width: 11, value: (v) => v.visited_on },
	{ key: 'repair_due_on', header: 'Repair due', width: 11, value: (v) => v.repair_due_on },
	{ key: 'confirmed_at', header: 'Not found confirmed at', width: 20, value: (v) => v.confirmed_at },
	{ key: 'recorded_by', header: 'Recorded by', width: 20, value: (v) => v.recorded_by },
	{ key: 'note', header: 'Note', width: 40, value: (v) => v.note }
];

const clean = (x: string | number | boolean | null) => (typeof x === 'string' ? neutraliseCell(x) : x);

export function exportFileName(draw: DrawView, ext: 'csv' | 'xlsx'): string {
	return `runnel-field-visits-fy${draw.fiscal_year}-seed-${draw.seed.replace(/[^A-Za-z0-9-]/g, '_')}.${ext}`;
}

export function visitsCsv(principal: Principal, draw: DrawView): ReadableStream<Uint8Array> {
	const out = stringify({ header: true, columns: COLUMNS.map((c) => ({ key: c.key, header: c.header })), bom: true });
	(async () => {
		for await (const v of visitsOfDraw(getDb(), principal, Number(draw.id))) {
			const row: Record<string, unknown> = {};
			for (const c of COLUMNS) row[c.key] = clean(c.value(v));
			if (!out.write(row)) await new Promise((res) => out.once('drain', res));
		}
		out.end();
	})().catch((e) => out.destroy(e as Error));
	return Readable.toWeb(out) as unknown as ReadableStream<Uint8Array>;
}

export function visitsXlsx(principal: Principal, draw: DrawView): ReadableStream<Uint8Array> {
	const pass = new PassThrough();
	const wb = new ExcelJS.stream.xlsx.WorkbookWriter({ stream: pass, useStyles: true, useSharedStrings: false });
	(async () => {
		const ws = wb.addWorksheet('Visits', { views: [{ state: 'frozen', ySplit: 1 }] });
		ws.columns = COLUMNS.map((c) => ({ key: c.key, header: c.header, width: c.width }));
		ws.getRow(1).font = { bold: true };
		ws.getRow(1).commit();
		for await (const v of visitsOfDraw(getDb(), principal, Number(draw.id))) {
			const row: Record<string, unknown> = {};
			for (const c of COLUMNS) row[c.key] = clean(c.value(v));
			ws.addRow(row).commit();
		}
		ws.commit();
		const about = wb.addWorksheet('Draw');
		about.columns = [
			{ key: 'item', header: 'Item', width: 34 },
			{ key: 'value', header: 'Value', width: 40 }
		];
		about.getRow(1).font = { bold: true };
		const facts: Array<[string, string | number]> = [
			['Fiscal year (state)', draw.fiscal_year],
			['Seed (repeat the draw with it)', draw.seed],
			['Percent per district', draw.params.percent],
			['Minimum per district', draw.params.min_per_district],
			['Edge-of-field weight', draw.params.edge_weight],
			['Never-visited weight', draw.params.never_visited_weight],
			['In-service practices drawn from', draw.population],
			['Sample size', draw.sample_size],
			['Visits due by', draw.due_on],
			['Drawn by', draw.drawn_by],
			['Drawn at', draw.created_at]
		];
		for (const [item, value] of facts) about.addRow({ item, value: clean(value) as string | number }).commit();
		about.commit();
		await wb.commit();
	})().catch((e) => {
		logger.error({ err: e }, 'field visit XLSX export failed');
		pass.destroy(e as Error);
	});
	return Readable.toWeb(pass) as unknown as ReadableStream<Uint8Array>;
}
