// The XLSX template of practice events, generated from the event schema by the same builder as the
// record template (template-xlsx.ts): an "Events" sheet (first, so an upload of the filled template
// reads it) with a note on every header cell, a drop-down for the kind, and date, number and length
// validation drawn from each column's JSON Schema; and a "Columns" sheet with the events data
// dictionary. Server and CLI.
import type ExcelJS from 'exceljs';
import { eventColumnNote, eventDataDictionary } from '../../schema/event-dictionary';
import { EVENT_FURTHER_CHECKS, eventColumnJsonSchema } from '../../schema/event-json-schema';
import {
	EVENT_COLUMN_INFO,
	EVENT_SCHEMA_VERSION,
	PRACTICE_EVENT_COLUMNS,
	type EventColumnInfo,
	type PracticeEventColumn
} from '../../schema/practice-event';
import { buildTemplateWorkbook, type TemplateSpec } from './template-xlsx';

const EVENTS_TEMPLATE: TemplateSpec<PracticeEventColumn, EventColumnInfo> = {
	title: `Runnel practice events, schema version ${EVENT_SCHEMA_VERSION}`,
	sheet: 'Events',
	columns: PRACTICE_EVENT_COLUMNS,
	info: EVENT_COLUMN_INFO,
	jsonSchema: eventColumnJsonSchema,
	note: eventColumnNote,
	numberError: (lo, hi) => `Enter a number from ${lo} to ${hi}.`,
	dictionary: {
		widths: { name: 24, title: 24, required: 30, type: 20, unit: 16, rules: 60, description: 80, example: 20 },
		groups: eventDataDictionary
	},
	furtherChecks: EVENT_FURTHER_CHECKS,
	footer: `Event schema version ${EVENT_SCHEMA_VERSION}.`
};

export function buildEventsXlsxTemplateWorkbook(opts: { created?: Date } = {}): ExcelJS.Workbook {
	return buildTemplateWorkbook(EVENTS_TEMPLATE, opts.created);
}

export async function eventsXlsxTemplate(opts: { created?: Date } = {}): Promise<Buffer> {
	return Buffer.from(await buildEventsXlsxTemplateWorkbook(opts).xlsx.writeBuffer());
}
