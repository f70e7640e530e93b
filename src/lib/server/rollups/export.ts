// Rollup exports: CSV (csv-stringify) and XLSX (exceljs streaming writer), written to a stream the
// response sends as it is produced. Both hold the same columns; CSV neutralises text cells a spreadsheet
// would read as a formula.
import { PassThrough, Readable } from 'node:stream';
import { stringify } from 'csv-stringify';
import ExcelJS from 'exceljs';
import { formatCitation, type EfficiencyValue, type ReductionMethod } from '$lib/domain/reduction-method';
import type { RollupCell, RollupGroupingResult, RollupResponse, RollupTotal } from '$lib/schema/rollups';
import { logger } from '../log';

type Kind = 'text' | 'int' | 'money' | 'lb' | 'acres' | 'fy';

export interface ExportColumn {
	key: string;
	header: string;
	kind: Kind;
	width: number;
}

const MEASURE_COLUMNS: ExportColumn[] = [
	{ key: 'practices', header: 'Practices', kind: 'int', width: 11 },
	{ key: 'operations', header: 'Distinct operations', kind: 'int', width: 12 },
	{ key: 'credited_acres', header: 'Credited acres', kind: 'acres', width: 14 },
	{ key: 'cost_usd', header: 'Cost (USD)', kind: 'money', width: 15 },
	{ key: 'cost_share_usd', header: 'Cost-share (USD)', kind: 'money', width: 15 },
	{ key: 'n_lb_yr_mean', header: 'N reduction, lb/yr (mean)', kind: 'lb', width: 14 },
	{ key: 'n_lb_yr_low', header: 'N reduction, lb/yr (low)', kind: 'lb', width: 14 },
	{ key: 'n_lb_yr_high', header: 'N reduction, lb/yr (high)', kind: 'lb', width: 14 },
	{ key: 'p_lb_yr_mean', header: 'P reduction, lb/yr (mean)', kind: 'lb', width: 14 },
	{ key: 'p_lb_yr_low', header: 'P reduction, lb/yr (low)', kind: 'lb', width: 14 },
	{ key: 'p_lb_yr_high', header: 'P reduction, lb/yr (high)', kind: 'lb', width: 14 },
	{ key: 'usd_per_lb_n', header: 'USD per lb N/yr', kind: 'money', width: 12 }
];

/** Columns of one grouping's table: row type, echo of method and bases, the grouping's keys, the measures. */
export function exportColumns(g: RollupGroupingResult, researcher: boolean): ExportColumn[] {
	const cols: ExportColumn[] = [
		{ key: 'row_type', header: 'Row', kind: 'text', width: 7 },
		{ key: 'method_version', header: 'Method version', kind: 'text', width: 12 },
		{ key: 'fy_basis', header: 'FY basis', kind: 'text', width: 9 },
		{ key: 'basis', header: 'Counted', kind: 'text', width: 11 },
		{ key: 'fy', header: 'FY', kind: 'fy', width: 8 }
	];
	if (g.group.includes('district')) {
		cols.push(
			{ key: 'district_code', header: 'District code', kind: 'text', width: 10 },
			{ key: 'district_name', header: 'District', kind: 'text', width: 32 }
		);
	}
	if (g.group.includes('county')) {
		if (researcher) {
			cols.push(
				{ key: 'area_level', header: 'Area level', kind: 'text', width: 10 },
				{ key: 'area_name', header: 'Area', kind: 'text', width: 20 }
			);
		}
		cols.push(
			{ key: 'county_fips', header: 'County FIPS', kind: 'text', width: 10 },
			{ key: 'county_name', header: 'County', kind: 'text', width: 18 }
		);
	}
	if (g.group.includes('huc8')) cols.push({ key: 'huc8', header: 'HUC-8', kind: 'text', width: 11 });
	if (g.group.includes('practice')) {
		cols.push(
			{ key: 'practice_code', header: 'Practice', kind: 'text', width: 9 },
			{ key: 'practice_name', header: 'Practice name', kind: 'text', width: 30 }
		);
	}
	return [...cols, ...MEASURE_COLUMNS];
}

/** The rows of one grouping: every cell, then one totals row per FY. */
export function* exportRows(r: RollupResponse, g: RollupGroupingResult): Generator<Record<string, unknown>> {
	const echo = { method_version: r.method_version, fy_basis: r.fy_basis, basis: r.basis };
	for (const c of g.cells) yield { row_type: 'cell', ...echo, ...(c as RollupCell) };
	const label = g.group.includes('district')
		? 'district_name'
		: g.group.includes('county')
			? 'county_name'
			: g.group.includes('huc8')
				? 'huc8'
				: g.group.includes('practice')
					? 'practice_name'
					: null;
	for (const t of g.totals) yield { row_type: 'total', ...echo, ...(t as RollupTotal), ...(label ? { [label]: 'All' } : {}) };
}

/**
 * Spreadsheet formula injection (OWASP "CSV Injection"): a text cell starting with `=`, `+`, `-`, `@`, a tab or
 * a carriage return is prefixed with a single quote so spreadsheet programs show it as text.
 */
export function neutraliseCell(v: unknown): unknown {
	return typeof v === 'string' && /^[=+\-@\t\r]/.test(v) ? `'${v}` : v;
}

export function csvStream(r: RollupResponse, researcher: boolean): ReadableStream<Uint8Array> {
	const g = r.groupings[0];
	const cols = exportColumns(g, researcher);
	const out = stringify({ header: true, columns: cols.map((c) => ({ key: c.key, header: c.header })), bom: true });
	(async () => {
		for (const row of exportRows(r, g)) {
			const clean: Record<string, unknown> = {};
			for (const c of cols) clean[c.key] = neutraliseCell(row[c.key] ?? null);
			if (!out.write(clean)) await new Promise((res) => out.once('drain', res));
		}
		out.end();
	})().catch((e) => out.destroy(e as Error));
	return Readable.toWeb(out) as unknown as ReadableStream<Uint8Array>;
}

const NUM_FMT: Record<Kind, string | undefined> = {
	text: undefined,
	fy: '0',
	int: '#,##0',
	money: '"$"#,##0.00',
	lb: '#,##0.0',
	acres: '#,##0.00'
};

const SHEET_TITLES: Record<string, string> = { district: 'district', county: 'county', huc8: 'HUC-8', practice: 'practice', fy: 'FY' };

export function sheetName(group: readonly string[], used: Set<string>): string {
	const base = ('By ' + group.map((d) => SHEET_TITLES[d] ?? d).join(', ')).slice(0, 28);
	let name = base;
	for (let i = 2; used.has(name); i++) name = `${base} ${i}`;
	used.add(name);
	return name;
}

const pct = (x: number | null | undefined) => (x === null || x === undefined ? null : Math.round(x * 1000) / 10);

function efficiencyCells(e: EfficiencyValue | null) {
	return e
		? [pct(e.mean), pct(e.sd), e.applies_to, formatCitation(e.citation) + (e.citation.note ? ` — ${e.citation.note}` : '')]
		: [null, null, 'not credited', null];
}

/** Writes the workbook: a sheet per grouping, then "Method and sources" and "Notes". */
async function writeWorkbook(
	wb: ExcelJS.stream.xlsx.WorkbookWriter,
	r: RollupResponse,
	method: ReductionMethod,
	researcher: boolean
): Promise<void> {
	const used = new Set<string>();
	const header = { font: { bold: true }, fill: { type: 'pattern', pattern: 'solid', fgColor: { argb: 'FFEEF7F8' } } } as const;
	for (const g of r.groupings) {
		const cols = exportColumns(g, researcher);
		const ws = wb.addWorksheet(sheetName(g.group, used), { views: [{ state: 'frozen', ySplit: 1 }] });
		ws.columns = cols.map((c) => ({
			header: c.header,
			key: c.key,
			width: c.width,
			style: NUM_FMT[c.kind] ? { numFmt: NUM_FMT[c.kind] } : {}
		}));
		const h = ws.getRow(1);
		h.font = header.font;
		h.fill = header.fill;
		h.commit();
		for (const row of exportRows(r, g)) {
			const values: Record<string, unknown> = {};
			for (const c of cols) values[c.key] = row[c.key] ?? null;
			const added = ws.addRow(values);
			if (row.row_type === 'total') added.font = { bold: true };
			added.commit();
		}
		ws.commit();
	}

	const ms = wb.addWorksheet('Method and sources', { views: [{ state: 'frozen', ySplit: 1 }] });
	ms.columns = [
		{ header: 'Item', key: 'item', width: 12 },
		{ header: 'Practice', key: 'practice', width: 30 },
		{ header: 'As in the source', key: 'source_practice', width: 30 },
		{ header: 'N efficiency %', key: 'n_mean', width: 10, style: { numFmt: '0.0' } },
		{ header: 'N spread (SD) %', key: 'n_sd', width: 10, style: { numFmt: '0.0' } },
		{ header: 'N applies to', key: 'n_applies', width: 13 },
		{ header: 'N source', key: 'n_source', width: 60 },
		{ header: 'P efficiency %', key: 'p_mean', width: 10, style: { numFmt: '0.0' } },
		{ header: 'P spread (SD) %', key: 'p_sd', width: 10, style: { numFmt: '0.0' } },
		{ header: 'P applies to', key: 'p_applies', width: 13 },
		{ header: 'P source', key: 'p_source', width: 60 },
		{ header: 'Credited on', key: 'credited_basis', width: 18 },
		{ header: 'Lifespan, years', key: 'lifespan', width: 9 },
		{ header: 'Lifespan source', key: 'lifespan_source', width: 40 },
		{ header: 'Note', key: 'note', width: 60 }
	];
	const mh = ms.getRow(1);
	mh.font = header.font;
	mh.fill = header.fill;
	mh.commit();
	ms.addRow({ item: 'Method', practice: `${method.version}: ${method.label}`, note: method.description }).commit();
	for (const p of method.practices) {
		const [nMean, nSd, nApplies, nSource] = efficiencyCells(p.n);
		const [pMean, pSd, pApplies, pSource] = efficiencyCells(p.p);
		ms.addRow({
			item: 'Efficiency',
			practice: p.practice_code,
			source_practice: p.source_practice,
			n_mean: nMean,
			n_sd: nSd,
			n_applies: nApplies,
			n_source: nSource,
			p_mean: pMean,
			p_sd: pSd,
			p_applies: pApplies,
			p_source: pSource,
			credited_basis: p.credited_basis === 'extent_acres' ? 'acres treated' : 'drainage area',
			lifespan: p.lifespan_years,
			lifespan_source: formatCitation(p.lifespan_citation),
			note: p.note
		}).commit();
	}
	const baselineRow = (label: string, b: ReductionMethod['baseline']['statewide']) =>
		ms
			.addRow({
				item: 'Baseline',
				practice: label,
				source_practice: `N ${b.n_lb_per_ac_yr} lb/ac/yr; P ${b.p_lb_per_ac_yr} lb/ac/yr`,
				n_source: formatCitation(b.citation) + (b.citation.note ? ` — ${b.citation.note}` : ''),
				note: 'Baseline loss the efficiencies apply to (lb per acre per year).'
			})
			.commit();
	baselineRow('Statewide', method.baseline.statewide);
	for (const c of method.baseline.counties) baselineRow(`County ${c.county_fips}`, c);
	ms.commit();

	const notes = wb.addWorksheet('Notes');
	notes.columns = [
		{ header: 'Notes and caveats', key: 'note', width: 120 },
		{ header: '', key: 'value', width: 30 }
	];
	const nh = notes.getRow(1);
	nh.font = header.font;
	nh.commit();
	const facts: [string, string | number][] = [
		['Method version', r.method_version],
		['Fiscal-year basis', r.fy_basis === 'state' ? `state (starts in month ${r.state_fy_start_month})` : 'federal (October–September)'],
		['Counted', r.basis === 'in_service' ? 'in service during the FY' : 'installed during the FY'],
		['Fiscal years', r.fy.from === r.fy.to ? String(r.fy.from) : `${r.fy.from}–${r.fy.to}`],
		['District filter', r.filters.district ?? 'all'],
		['County filter', r.filters.county ?? 'all'],
		['Practice filter', r.filters.practice ?? 'all'],
		['Summary rebuilt', r.refreshed_at ?? '—'],
		['Exported', new Date().toISOString()]
	];
	for (const [k, v] of facts) notes.addRow({ note: k, value: v }).commit();
	if (r.small_cells) {
		const s = r.small_cells;
		notes
			.addRow({
				note: `Small-cell rule (k = ${s.k}): of ${s.cells} county × FY × practice cells, ${s.published_as_county} published by county, ${s.generalised_to_region} generalised to a region, ${s.generalised_to_state} to the state, ${s.suppressed} suppressed.`
			})
			.commit();
	}
	notes.addRow({}).commit();
	for (const n of r.notes) notes.addRow({ note: n }).commit();
	notes.commit();
}

export function xlsxStream(r: RollupResponse, method: ReductionMethod, researcher: boolean): ReadableStream<Uint8Array> {
	const pass = new PassThrough();
	const wb = new ExcelJS.stream.xlsx.WorkbookWriter({ stream: pass, useStyles: true, useSharedStrings: false });
	wb.creator = 'Runnel';
	writeWorkbook(wb, r, method, researcher)
		.then(() => wb.commit())
		.catch((e) => {
			logger.error({ err: e }, 'xlsx export failed');
			pass.destroy(e as Error);
		});
	return Readable.toWeb(pass) as unknown as ReadableStream<Uint8Array>;
}

export const XLSX_TYPE = 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet';

/** A download name such as `runnel-rollups-ia-2017.1-state-in_service-FY2020-2027.csv`. */
export function exportFileName(r: RollupResponse, ext: 'csv' | 'xlsx'): string {
	const fy = r.fy.from === r.fy.to ? `FY${r.fy.from}` : `FY${r.fy.from}-${r.fy.to}`;
	return `runnel-rollups-${r.method_version}-${r.fy_basis}-${r.basis}-${fy}.${ext}`.replace(/[^A-Za-z0-9._-]/g, '_');
}
