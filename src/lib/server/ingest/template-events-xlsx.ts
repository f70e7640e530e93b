// The XLSX template of practice events, generated from the event schema: an "Events" sheet (first, so
// an upload of the filled template reads it) with a note on every header cell, a drop-down for the
// kind, and date, number and length validation drawn from each column's JSON Schema; and a "Columns"
// sheet with the events data dictionary. Server and CLI.
import ExcelJS from 'exceljs';
import { cellRef, columnLetters } from '../../domain/cell-ref';
import { eventColumnNote, eventDataDictionary } from '../../schema/event-dictionary';
import { EVENT_FURTHER_CHECKS, eventColumnJsonSchema } from '../../schema/event-json-schema';
import { EVENT_COLUMN_INFO, EVENT_SCHEMA_VERSION, PRACTICE_EVENT_COLUMNS, type PracticeEventColumn } from '../../schema/practice-event';
import { TEMPLATE_ROWS } from './template-xlsx';

type Validation = ExcelJS.DataValidation;

function validationFor(col: PracticeEventColumn, topLeft: string): Validation | null {
	const info = EVENT_COLUMN_INFO[col];
	const s = eventColumnJsonSchema(col);
	const common = { allowBlank: info.requirement !== 'always', showErrorMessage: true, errorStyle: 'stop', errorTitle: info.title };
	if (Array.isArray(s.enum))
		return {
			...common,
			type: 'list',
			formulae: [`"${(s.enum as string[]).join(',')}"`],
			error: `Use one of: ${(s.enum as string[]).join(', ')}.`
		};
	if (info.kind === 'date')
		return {
			...common,
			type: 'custom',
			formulae: [`AND(ISNUMBER(${topLeft}),${topLeft}>=DATE(1900,1,1),${topLeft}<=TODAY())`],
			error: 'Enter a real date, not in the future (YYYY-MM-DD).'
		};
	if (info.kind === 'number') {
		const lo = (s.exclusiveMinimum ?? s.minimum) as number;
		const hi = s.maximum as number;
		const low = s.exclusiveMinimum !== undefined ? lo + 0.000001 : lo;
		return { ...common, type: 'decimal', operator: 'between', formulae: [low, hi], error: `Enter a number from ${lo} to ${hi}.` };
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

export function buildEventsXlsxTemplateWorkbook(opts: { created?: Date } = {}): ExcelJS.Workbook {
	const wb = new ExcelJS.Workbook();
	wb.creator = 'Runnel';
	wb.created = opts.created ?? new Date();
	wb.modified = wb.created;
	wb.title = `Runnel practice events, schema version ${EVENT_SCHEMA_VERSION}`;
	const events = wb.addWorksheet('Events', { views: [{ state: 'frozen', ySplit: 1 }] });
	const columnsSheet = wb.addWorksheet('Columns');
	PRACTICE_EVENT_COLUMNS.forEach((col, i) => {
		const n = i + 1;
		const info = EVENT_COLUMN_INFO[col];
		const cell = events.getCell(cellRef(n, 1));
		cell.value = col;
		cell.font = { bold: true, color: info.requirement === 'always' ? { argb: 'FF7A2E0B' } : undefined };
		cell.fill = { type: 'pattern', pattern: 'solid', fgColor: { argb: info.requirement === 'always' ? 'FFFBE7DC' : 'FFEFF5F6' } };
		cell.note = eventColumnNote(col);
		const column = events.getColumn(n);
		column.width = Math.max(12, Math.min(34, col.length + 4));
		if (info.kind === 'date') column.numFmt = 'yyyy-mm-dd';
		else if (info.kind === 'text' || info.kind === 'enum') column.numFmt = '@';
		const v = validationFor(col, cellRef(n, 2));
		if (v) {
			const letters = columnLetters(n);
			(events as unknown as { dataValidations: { add: (address: string, v: Validation) => void } }).dataValidations.add(
				`${letters}2:${letters}${TEMPLATE_ROWS + 1}`,
				v
			);
		}
	});
	columnsSheet.columns = [
		{ header: 'column', key: 'name', width: 24 },
		{ header: 'title', key: 'title', width: 24 },
		{ header: 'required', key: 'required', width: 30 },
		{ header: 'type', key: 'type', width: 20 },
		{ header: 'unit', key: 'unit', width: 16 },
		{ header: 'rules', key: 'rules', width: 60 },
		{ header: 'description', key: 'description', width: 80 },
		{ header: 'example', key: 'example', width: 20 }
	];
	columnsSheet.getRow(1).font = { bold: true };
	for (const g of eventDataDictionary())
		for (const c of g.columns)
			columnsSheet.addRow({
				name: c.name,
				title: c.title,
				required: c.required,
				type: c.type,
				unit: c.unit ?? '',
				rules: c.rules.join('; '),
				description: c.description,
				example: String(c.example)
			});
	columnsSheet.addRow([]);
	columnsSheet.addRow(['Also checked by the hub:']).font = { bold: true };
	for (const rule of EVENT_FURTHER_CHECKS) columnsSheet.addRow([rule]);
	columnsSheet.addRow([]);
	columnsSheet.addRow([`Event schema version ${EVENT_SCHEMA_VERSION}.`]);
	return wb;
}

export async function eventsXlsxTemplate(opts: { created?: Date } = {}): Promise<Buffer> {
	return Buffer.from(await buildEventsXlsxTemplateWorkbook(opts).xlsx.writeBuffer());
}
