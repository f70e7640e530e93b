// The data dictionary of the practice event: every column with its meaning, unit and rules in words,
// derived from the schema (practice-event.ts). Feeds the /schema page's events section and the XLSX
// template's notes. Pure.
import { eventColumnJsonSchema } from './event-json-schema';
import {
	EVENT_COLUMN_GROUPS,
	EVENT_COLUMN_INFO,
	PRACTICE_EVENT_COLUMNS,
	type EventColumnGroup,
	type EventColumnInfo,
	type PracticeEventColumn
} from './practice-event';

export interface EventDictionaryColumn extends EventColumnInfo {
	position: number;
	required: string;
	type: string;
	rules: string[];
}

export interface EventDictionaryGroup {
	id: EventColumnGroup;
	title: string;
	columns: EventDictionaryColumn[];
}

const fmt = (n: number) => n.toLocaleString('en-US', { maximumFractionDigits: 6 });

function requiredText(info: EventColumnInfo): string {
	if (info.requirement === 'always') return 'Required';
	if (info.requirement === 'per-kind') return `Required for ${info.required_for!.join(', ')}`;
	return 'Optional';
}

const TYPES: Record<string, string> = {
	integer: 'whole number',
	number: 'number',
	date: 'date (YYYY-MM-DD)',
	code: 'code (digits, as text)',
	enum: 'one value from a list',
	text: 'text'
};

export function eventColumnRules(col: PracticeEventColumn): string[] {
	const s = eventColumnJsonSchema(col);
	const info = EVENT_COLUMN_INFO[col];
	const out: string[] = [];
	const num = (k: string) => (typeof s[k] === 'number' ? (s[k] as number) : undefined);
	if (num('exclusiveMinimum') !== undefined) out.push(`greater than ${fmt(num('exclusiveMinimum')!)}`);
	if (num('minimum') !== undefined) out.push(`at least ${fmt(num('minimum')!)}`);
	if (num('maximum') !== undefined) out.push(`at most ${fmt(num('maximum')!)}`);
	if (s.multipleOf === 0.01) out.push('at most 2 decimals');
	if (s.multipleOf === 0.25) out.push('in quarter inches at most (e.g. 36.25)');
	if (typeof s.maxLength === 'number') out.push(`at most ${fmt(s.maxLength)} characters`);
	if (Array.isArray(s.enum)) out.push(`one of: ${(s.enum as string[]).join(', ')}`);
	if (s.format === 'date') out.push('a real calendar date written YYYY-MM-DD');
	else if (typeof s.pattern === 'string' && info.hint) out.push(info.hint);
	if (info.kind === 'number') out.push('digits and a decimal point only (no commas or units)');
	if (info.kinds) out.push(`used for ${info.kinds.join(', ')} events`);
	return out;
}

export function eventDictionaryColumn(col: PracticeEventColumn): EventDictionaryColumn {
	const info = EVENT_COLUMN_INFO[col];
	return {
		...info,
		position: PRACTICE_EVENT_COLUMNS.indexOf(col) + 1,
		required: requiredText(info),
		type: TYPES[info.kind] ?? 'text',
		rules: eventColumnRules(col)
	};
}

export function eventDataDictionary(): EventDictionaryGroup[] {
	return (Object.keys(EVENT_COLUMN_GROUPS) as EventColumnGroup[]).map((id) => ({
		id,
		title: EVENT_COLUMN_GROUPS[id],
		columns: PRACTICE_EVENT_COLUMNS.filter((c) => EVENT_COLUMN_INFO[c].group === id).map(eventDictionaryColumn)
	}));
}

export function eventColumnNote(col: PracticeEventColumn): string {
	const d = eventDictionaryColumn(col);
	return [
		`${d.title} — ${d.required.toLowerCase()}.`,
		d.description,
		d.unit ? `Unit: ${d.unit}.` : null,
		d.rules.length ? `Rules: ${d.rules.join('; ')}.` : null,
		`Example: ${d.example}`
	]
		.filter(Boolean)
		.join('\n');
}
