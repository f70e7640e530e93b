// The XLSX template, generated from the schema: a "Records" sheet (first, so an upload of the filled
// template reads it) with a note on every header cell (meaning, unit, rules, example), drop-down lists
// for practice codes, status and the hub state's county FIPS codes, and number, date and length
// validation drawn from each column's JSON Schema; a "Columns" sheet with the data dictionary; a hidden
// "Lists" sheet the drop-downs read from. Server and CLI.
import ExcelJS from 'exceljs';
import { cellRef, columnLetters } from '../../domain/cell-ref';
import { PRACTICE_CATALOG } from '../../domain/practice-catalog';
import { columnNote, dataDictionary } from '../../schema/dictionary';
import { columnJsonSchema, FURTHER_CHECKS } from '../../schema/json-schema';
import { COLUMN_INFO, PRACTICE_RECORD_COLUMNS, SCHEMA_VERSION, type PracticeRecordColumn } from '../../schema/practice-record';

/** Rows of the Records sheet that carry drop-downs and validation. */
export const TEMPLATE_ROWS = 5000;

export interface XlsxTemplateOptions {
	stateFips: string;
	/** The state's counties, for the county drop-down. */
	counties: Array<{ fips: string; name: string }>;
	/** Workbook creation date (fixed in tests for reproducible files). */
	created?: Date;
}

type Validation = ExcelJS.DataValidation;

function validationFor(col: PracticeRecordColumn, topLeft: string, lists: { practices: string; counties: string }): Validation | null {
	const info = COLUMN_INFO[col];
	const s = columnJsonSchema(col) as Record<string, unknown>;
	const common = {
		allowBlank: info.requirement !== 'always',
		showErrorMessage: true,
		errorStyle: 'stop',
		errorTitle: info.title,
		showInputMessage: false
	};
	if (col === 'practice_code')
		return { ...common, type: 'list', formulae: [lists.practices], error: 'Choose a practice code from the list.' };
	if (col === 'county_fips')
		return { ...common, type: 'list', formulae: [lists.counties], error: "Choose a county FIPS code of the hub's state from the list." };
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
		const error = `Enter a number${lo !== undefined ? (s.exclusiveMinimum !== undefined ? ` greater than ${lo}` : ` of at least ${lo}`) : ''}${hi !== undefined ? ` and ${s.exclusiveMaximum !== undefined ? 'less than' : 'at most'} ${hi}` : ''}.`;
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

export function buildXlsxTemplateWorkbook(opts: XlsxTemplateOptions): ExcelJS.Workbook {
	const wb = new ExcelJS.Workbook();
	wb.creator = 'Runnel';
	wb.created = opts.created ?? new Date();
	wb.modified = wb.created;
	wb.title = `Runnel practice records, schema version ${SCHEMA_VERSION}`;

	const records = wb.addWorksheet('Records', { views: [{ state: 'frozen', ySplit: 1 }] });
	const columnsSheet = wb.addWorksheet('Columns');
	const lists = wb.addWorksheet('Lists', { state: 'hidden' });

	// Lists: practice codes (A), their names (B), county codes (D), their names (E).
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
	const listRefs = {
		practices: `Lists!$A$2:$A$${PRACTICE_CATALOG.length + 1}`,
		counties: `Lists!$D$2:$D$${Math.max(2, opts.counties.length + 1)}`
	};

	// Records: header with notes, text/date formats per column, validation on the data rows.
	PRACTICE_RECORD_COLUMNS.forEach((col, i) => {
		const n = i + 1;
		const info = COLUMN_INFO[col];
		const cell = records.getCell(cellRef(n, 1));
		cell.value = col;
		cell.font = { bold: true, color: info.requirement === 'always' ? { argb: 'FF7A2E0B' } : undefined };
		cell.fill = { type: 'pattern', pattern: 'solid', fgColor: { argb: info.requirement === 'always' ? 'FFFBE7DC' : 'FFEFF5F6' } };
		cell.note = columnNote(col);
		const column = records.getColumn(n);
		column.width = Math.max(12, Math.min(34, col.length + 4));
		if (info.kind === 'date') column.numFmt = 'yyyy-mm-dd';
		else if (info.kind === 'text' || info.kind === 'code' || info.kind === 'enum') column.numFmt = '@';
		const v = validationFor(col, cellRef(n, 2), listRefs);
		if (v) {
			const letters = columnLetters(n);
			(records as unknown as { dataValidations: { add: (address: string, v: Validation) => void } }).dataValidations.add(
				`${letters}2:${letters}${TEMPLATE_ROWS + 1}`,
				v
			);
		}
	});

	// Columns: the data dictionary.
	columnsSheet.columns = [
		{ header: 'column', key: 'name', width: 32 },
		{ header: 'title', key: 'title', width: 24 },
		{ header: 'group', key: 'group', width: 28 },
		{ header: 'required', key: 'required', width: 40 },
		{ header: 'type', key: 'type', width: 20 },
		{ header: 'unit', key: 'unit', width: 22 },
		{ header: 'rules', key: 'rules', width: 60 },
		{ header: 'description', key: 'description', width: 80 },
		{ header: 'example', key: 'example', width: 20 },
		{ header: 'personal', key: 'personal', width: 10 },
		{ header: 'published', key: 'published', width: 12 }
	];
	columnsSheet.getRow(1).font = { bold: true };
	for (const g of dataDictionary()) {
		for (const c of g.columns) {
			columnsSheet.addRow({
				name: c.name,
				title: c.title,
				group: g.title,
				required: c.required,
				type: c.type,
				unit: c.unit ?? '',
				rules: c.rules.join('; '),
				description: c.description,
				example: String(c.example),
				personal: c.personal ? 'yes' : 'no',
				published: c.published ? (c.published_as ?? 'yes') : 'never'
			});
		}
	}
	columnsSheet.addRow([]);
	columnsSheet.addRow(['Also checked by the hub:']).font = { bold: true };
	for (const rule of FURTHER_CHECKS) columnsSheet.addRow([rule]);
	columnsSheet.addRow([]);
	columnsSheet.addRow([
		`Schema version ${SCHEMA_VERSION}. County list: state ${opts.stateFips}, U.S. Census Bureau county FIPS codes (2017 boundary files).`
	]);
	return wb;
}

/** The template as bytes. */
export async function xlsxTemplate(opts: XlsxTemplateOptions): Promise<Buffer> {
	return Buffer.from(await buildXlsxTemplateWorkbook(opts).xlsx.writeBuffer());
}
