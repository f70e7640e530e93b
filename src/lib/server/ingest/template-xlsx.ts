// The XLSX templates, generated from a schema (the practice record, the practice event): a data sheet
// ("Records" / "Events", first, so an upload of the filled template reads it) with a note on every
// header cell (meaning, unit, rules, example) and number, date, length and list validation drawn from
// each column's JSON Schema; a "Columns" sheet with the data dictionary. The record template also has
// drop-down lists for practice codes and the hub state's county FIPS codes, read from a hidden "Lists"
// sheet. Server and CLI.
import ExcelJS from 'exceljs';
import { cellRef, columnLetters } from '../../domain/cell-ref';
import { PRACTICE_CATALOG } from '../../domain/practice-catalog';
import type { BaseColumnInfo, DictionaryColumnOf } from '../../schema/column-schema';
import { columnNote, dataDictionary } from '../../schema/dictionary';
import { columnJsonSchema, FURTHER_CHECKS } from '../../schema/json-schema';
import {
	COLUMN_INFO,
	PRACTICE_RECORD_COLUMNS,
	SCHEMA_VERSION,
	type ColumnInfo,
	type PracticeRecordColumn
} from '../../schema/practice-record';

/** Rows of the data sheet that carry drop-downs and validation. */
export const TEMPLATE_ROWS = 5000;

export interface XlsxTemplateOptions {
	stateFips: string;
	/** The state's counties, for the county drop-down. */
	counties: Array<{ fips: string; name: string }>;
	/** Workbook creation date (fixed in tests for reproducible files). */
	created?: Date;
}

type Validation = ExcelJS.DataValidation;
type Common = Pick<Validation, 'allowBlank' | 'showErrorMessage' | 'errorStyle' | 'errorTitle' | 'showInputMessage'>;

/** What a template takes from its schema. */
export interface TemplateSpec<C extends string, I extends BaseColumnInfo = BaseColumnInfo> {
	/** The workbook's title. */
	title: string;
	/** The data sheet's name. */
	sheet: string;
	columns: readonly C[];
	info: Readonly<Record<C, I>>;
	jsonSchema: (col: C) => Record<string, unknown>;
	note: (col: C) => string;
	/** A column's validation that comes before the schema's own (e.g. a drop-down from the Lists sheet). */
	validation?: (col: C, common: Common) => Validation | null;
	/** The error of a number column's validation; `lo`/`hi`: its bounds, if any. */
	numberError?: (lo: number | undefined, hi: number | undefined, s: Record<string, unknown>) => string;
	/** Adds the sheets that follow the data and Columns sheets (e.g. the hidden Lists sheet). */
	moreSheets?: (wb: ExcelJS.Workbook) => void;
	/**
	 * The Columns sheet: its columns in order with their widths (name, title, required, type, unit, rules,
	 * description, example and the schema's own; each headed by its key, `name` by "column"), the data
	 * dictionary's groups, and the schema's own cells of a row.
	 */
	dictionary: {
		widths: Record<string, number>;
		groups: () => Array<{ title: string; columns: Array<DictionaryColumnOf<I>> }>;
		extra?: (c: DictionaryColumnOf<I>, groupTitle: string) => Record<string, string>;
	};
	furtherChecks: readonly string[];
	/** The last line of the Columns sheet. */
	footer: string;
}

function defaultNumberError(lo: number | undefined, hi: number | undefined, s: Record<string, unknown>): string {
	return `Enter a number${lo !== undefined ? (s.exclusiveMinimum !== undefined ? ` greater than ${lo}` : ` of at least ${lo}`) : ''}${hi !== undefined ? ` and ${s.exclusiveMaximum !== undefined ? 'less than' : 'at most'} ${hi}` : ''}.`;
}

function validationFor<C extends string, I extends BaseColumnInfo>(spec: TemplateSpec<C, I>, col: C, topLeft: string): Validation | null {
	const info = spec.info[col];
	const s = spec.jsonSchema(col);
	const common: Common = {
		allowBlank: info.requirement !== 'always',
		showErrorMessage: true,
		errorStyle: 'stop',
		errorTitle: info.title,
		showInputMessage: false
	};
	const own = spec.validation?.(col, common);
	if (own) return own;
	if (Array.isArray(s.enum))
		return {
			...common,
			type: 'list',
			formulae: [`"${(s.enum as string[]).join(',')}"`],
			error: `Use one of: ${(s.enum as string[]).join(', ')}.`
		};
	if (info.kind === 'date') {
		// A custom rule, because the upper bound moves: a real date (a number in Excel) not after today.
		return {
			...common,
			type: 'custom',
			formulae: [`AND(ISNUMBER(${topLeft}),${topLeft}>=DATE(1900,1,1),${topLeft}<=TODAY())`],
			error: 'Enter a real date, not in the future (YYYY-MM-DD).'
		};
	}
	if (info.kind === 'number' || info.kind === 'integer') {
		const lo = (s.exclusiveMinimum ?? s.minimum) as number | undefined;
		const hi = (s.exclusiveMaximum ?? s.maximum) as number | undefined;
		const type = info.kind === 'integer' ? 'whole' : 'decimal';
		const error = (spec.numberError ?? defaultNumberError)(lo, hi, s);
		if (lo !== undefined && hi !== undefined) {
			// Excel's "between" is inclusive; an exclusive bound of 0 becomes the smallest 2-decimal value.
			const low = s.exclusiveMinimum !== undefined ? lo + (type === 'whole' ? 1 : 0.000001) : lo;
			const high = s.exclusiveMaximum !== undefined ? hi - 0.000001 : hi;
			return { ...common, type, operator: 'between', formulae: [low, high], error };
		}
		if (lo !== undefined)
			return { ...common, type, operator: s.exclusiveMinimum !== undefined ? 'greaterThan' : 'greaterThanOrEqual', formulae: [lo], error };
		return { ...common, type, operator: 'greaterThan', formulae: [-1e15], error };
	}
	if (typeof s.maxLength === 'number')
		return {
			...common,
			type: 'textLength',
			operator: 'lessThanOrEqual',
			formulae: [s.maxLength],
			error: `At most ${s.maxLength} characters.`
		};
	if (col === 'local_id')
		return {
			...common,
			type: 'textLength',
			operator: 'between',
			formulae: [1, 64],
			error: '1 to 64 characters: letters, digits, dot, underscore, hyphen.'
		};
	return null;
}

/** The template workbook of a schema. */
export function buildTemplateWorkbook<C extends string, I extends BaseColumnInfo>(
	spec: TemplateSpec<C, I>,
	created = new Date()
): ExcelJS.Workbook {
	const wb = new ExcelJS.Workbook();
	wb.creator = 'Runnel';
	wb.created = created;
	wb.modified = wb.created;
	wb.title = spec.title;

	const data = wb.addWorksheet(spec.sheet, { views: [{ state: 'frozen', ySplit: 1 }] });
	const columnsSheet = wb.addWorksheet('Columns');
	spec.moreSheets?.(wb);

	// The data sheet: header with notes, text/date formats per column, validation on the data rows.
	spec.columns.forEach((col, i) => {
		const n = i + 1;
		const info = spec.info[col];
		const cell = data.getCell(cellRef(n, 1));
		cell.value = col;
		cell.font = { bold: true, color: info.requirement === 'always' ? { argb: 'FF7A2E0B' } : undefined };
		cell.fill = { type: 'pattern', pattern: 'solid', fgColor: { argb: info.requirement === 'always' ? 'FFFBE7DC' : 'FFEFF5F6' } };
		cell.note = spec.note(col);
		const column = data.getColumn(n);
		column.width = Math.max(12, Math.min(34, col.length + 4));
		if (info.kind === 'date') column.numFmt = 'yyyy-mm-dd';
		else if (info.kind === 'text' || info.kind === 'code' || info.kind === 'enum') column.numFmt = '@';
		const v = validationFor(spec, col, cellRef(n, 2));
		if (v) {
			const letters = columnLetters(n);
			(data as unknown as { dataValidations: { add: (address: string, v: Validation) => void } }).dataValidations.add(
				`${letters}2:${letters}${TEMPLATE_ROWS + 1}`,
				v
			);
		}
	});

	// Columns: the data dictionary.
	columnsSheet.columns = Object.entries(spec.dictionary.widths).map(([key, width]) => ({
		header: key === 'name' ? 'column' : key,
		key,
		width
	}));
	columnsSheet.getRow(1).font = { bold: true };
	for (const g of spec.dictionary.groups()) {
		for (const c of g.columns) {
			columnsSheet.addRow({
				name: c.name,
				title: c.title,
				required: c.required,
				type: c.type,
				unit: c.unit ?? '',
				rules: c.rules.join('; '),
				description: c.description,
				example: String(c.example),
				...spec.dictionary.extra?.(c, g.title)
			});
		}
	}
	columnsSheet.addRow([]);
	columnsSheet.addRow(['Also checked by the hub:']).font = { bold: true };
	for (const rule of spec.furtherChecks) columnsSheet.addRow([rule]);
	columnsSheet.addRow([]);
	columnsSheet.addRow([spec.footer]);
	return wb;
}

// --- the practice-record template ---------------------------------------------------------------------

function recordTemplateSpec(opts: XlsxTemplateOptions): TemplateSpec<PracticeRecordColumn, ColumnInfo> {
	const listRefs = {
		practices: `Lists!$A$2:$A$${PRACTICE_CATALOG.length + 1}`,
		counties: `Lists!$D$2:$D$${Math.max(2, opts.counties.length + 1)}`
	};
	return {
		title: `Runnel practice records, schema version ${SCHEMA_VERSION}`,
		sheet: 'Records',
		columns: PRACTICE_RECORD_COLUMNS,
		info: COLUMN_INFO,
		jsonSchema: columnJsonSchema,
		note: columnNote,
		validation: (col, common) => {
			if (col === 'practice_code')
				return { ...common, type: 'list', formulae: [listRefs.practices], error: 'Choose a practice code from the list.' };
			if (col === 'county_fips')
				return {
					...common,
					type: 'list',
					formulae: [listRefs.counties],
					error: "Choose a county FIPS code of the hub's state from the list."
				};
			return null;
		},
		moreSheets: (wb) => {
			// Lists: practice codes (A), their names (B), county codes (D), their names (E).
			const lists = wb.addWorksheet('Lists', { state: 'hidden' });
			lists.getCell('A1').value = 'practice_code';
			lists.getCell('B1').value = 'practice';
			lists.getCell('D1').value = 'county_fips';
			lists.getCell('E1').value = 'county';
			PRACTICE_CATALOG.forEach((p, i) => {
				lists.getCell(`A${i + 2}`).value = p.code;
				lists.getCell(`B${i + 2}`).value = p.name;
			});
			opts.counties.forEach((c, i) => {
				lists.getCell(`D${i + 2}`).value = c.fips;
				lists.getCell(`E${i + 2}`).value = c.name;
			});
		},
		dictionary: {
			widths: {
				name: 32,
				title: 24,
				group: 28,
				required: 40,
				type: 20,
				unit: 22,
				rules: 60,
				description: 80,
				example: 20,
				personal: 10,
				published: 12
			},
			groups: dataDictionary,
			extra: (c, group) => ({
				group,
				personal: c.personal ? 'yes' : 'no',
				published: c.published ? (c.published_as ?? 'yes') : 'never'
			})
		},
		furtherChecks: FURTHER_CHECKS,
		footer: `Schema version ${SCHEMA_VERSION}. County list: state ${opts.stateFips}, U.S. Census Bureau county FIPS codes (2017 boundary files).`
	};
}

export function buildXlsxTemplateWorkbook(opts: XlsxTemplateOptions): ExcelJS.Workbook {
	return buildTemplateWorkbook(recordTemplateSpec(opts), opts.created);
}

/** The template as bytes. */
export async function xlsxTemplate(opts: XlsxTemplateOptions): Promise<Buffer> {
	return Buffer.from(await buildXlsxTemplateWorkbook(opts).xlsx.writeBuffer());
}
