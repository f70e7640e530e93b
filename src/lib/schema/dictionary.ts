// The data dictionary: every column with its meaning, unit, rules and privacy flags, in plain words,
// derived from the schema (practice-record.ts) and the practice catalog. Feeds the /schema page, the
// XLSX template's notes and "Columns" sheet, and the CLI. Pure.
import { PRACTICE_CATALOG } from '../domain/practice-catalog';
import { columnJsonSchema } from './json-schema';
import {
	COLUMN_GROUPS,
	COLUMN_INFO,
	PRACTICE_RECORD_COLUMNS,
	type ColumnGroup,
	type ColumnInfo,
	type PracticeRecordColumn
} from './practice-record';

export interface DictionaryColumn extends ColumnInfo {
	/** 1-based position in the template. */
	position: number;
	/** When a value is required, in words. */
	required: string;
	/** The value's type in words: text, whole number, number, date, code. */
	type: string;
	/** Each rule the value must meet, in words. */
	rules: string[];
}

export interface DictionaryGroup {
	id: ColumnGroup;
	title: string;
	columns: DictionaryColumn[];
}

const fmt = (n: number) => n.toLocaleString('en-US', { maximumFractionDigits: 6 });

function requiredText(info: ColumnInfo): string {
	switch (info.requirement) {
		case 'always':
			return 'Required';
		case 'when-withdrawn':
			return 'Required when status is withdrawn';
		case 'per-practice': {
			const codes = PRACTICE_CATALOG.filter((p) => p.credited_basis === info.name).map((p) => p.code);
			return `Required for practices ${codes.join(', ')}`;
		}
		default:
			return 'Optional';
	}
}

function typeText(info: ColumnInfo): string {
	switch (info.kind) {
		case 'integer':
			return 'whole number';
		case 'number':
			return 'number';
		case 'date':
			return 'date (YYYY-MM-DD)';
		case 'code':
			return 'code (digits, as text)';
		case 'enum':
			return 'one value from a list';
		default:
			return 'text';
	}
}

/** The constraints of a column in words, read from its JSON Schema. */
export function columnRules(col: PracticeRecordColumn): string[] {
	const s = columnJsonSchema(col) as Record<string, unknown>;
	const info = COLUMN_INFO[col];
	const out: string[] = [];
	const num = (k: string) => (typeof s[k] === 'number' ? (s[k] as number) : undefined);
	const min = num('minimum');
	const xmin = num('exclusiveMinimum');
	const max = num('maximum');
	const xmax = num('exclusiveMaximum');
	if (xmin !== undefined) out.push(`greater than ${fmt(xmin)}`);
	if (min !== undefined) out.push(`at least ${fmt(min)}`);
	if (xmax !== undefined) out.push(`less than ${fmt(xmax)}`);
	if (max !== undefined && max < Number.MAX_SAFE_INTEGER) out.push(`at most ${fmt(max)}`);
	if (s.multipleOf === 0.01) out.push('at most 2 decimals');
	if (typeof s.maxLength === 'number') out.push(`at most ${fmt(s.maxLength)} characters`);
	if (Array.isArray(s.enum)) {
		const values = s.enum as string[];
		out.push(values.length > 6 ? `one of the ${values.length} codes in the practice list` : `one of: ${values.join(', ')}`);
	}
	if (s.format === 'date') out.push('a real calendar date written YYYY-MM-DD');
	else if (typeof s.pattern === 'string' && info.hint) out.push(info.hint);
	if (info.kind === 'number') out.push('digits and a decimal point only (no commas, units or $)');
	if (info.kind === 'integer') out.push('digits only (no commas or units)');
	if (info.practices) out.push(`used for practice ${info.practices.join(', ')}`);
	return out;
}

export function dictionaryColumn(col: PracticeRecordColumn): DictionaryColumn {
	const info = COLUMN_INFO[col];
	return {
		...info,
		position: PRACTICE_RECORD_COLUMNS.indexOf(col) + 1,
		required: requiredText(info),
		type: typeText(info),
		rules: columnRules(col)
	};
}

/** Every column, grouped as on the /schema page. */
export function dataDictionary(): DictionaryGroup[] {
	return (Object.keys(COLUMN_GROUPS) as ColumnGroup[]).map((id) => ({
		id,
		title: COLUMN_GROUPS[id],
		columns: PRACTICE_RECORD_COLUMNS.filter((c) => COLUMN_INFO[c].group === id).map(dictionaryColumn)
	}));
}

/** A one-cell summary of a column for a spreadsheet note. */
export function columnNote(col: PracticeRecordColumn): string {
	const d = dictionaryColumn(col);
	return [
		`${d.title} — ${d.required.toLowerCase()}.`,
		d.description,
		d.unit ? `Unit: ${d.unit}.` : null,
		d.rules.length ? `Rules: ${d.rules.join('; ')}.` : null,
		`Example: ${d.example}`,
		d.personal ? 'Personal information: never published.' : !d.published ? 'Never published.' : null
	]
		.filter(Boolean)
		.join('\n');
}
