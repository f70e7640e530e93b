// The data dictionary: every column with its meaning, unit, rules and privacy flags, in plain words,
// derived from the schema (practice-record.ts) and the practice catalog. Feeds the /schema page, the
// XLSX template's notes and "Columns" sheet, and the CLI. Pure. The wording shared with the event
// dictionary is built by column-schema.ts's makeDictionary.
import { PRACTICE_CATALOG } from '../domain/practice-catalog';
import { makeDictionary, type DictionaryColumnOf, type DictionaryGroupOf } from './column-schema';
import { columnJsonSchema } from './json-schema';
import { COLUMN_GROUPS, COLUMN_INFO, PRACTICE_RECORD_COLUMNS, type ColumnGroup, type ColumnInfo } from './practice-record';

export type DictionaryColumn = DictionaryColumnOf<ColumnInfo>;
export type DictionaryGroup = DictionaryGroupOf<ColumnGroup, ColumnInfo>;

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

const dictionary = makeDictionary({
	columns: PRACTICE_RECORD_COLUMNS,
	info: COLUMN_INFO,
	groups: COLUMN_GROUPS,
	jsonSchema: columnJsonSchema,
	requiredText,
	numberForm: 'digits and a decimal point only (no commas, units or $)',
	extraRules: (info) => (info.practices ? [`used for practice ${info.practices.join(', ')}`] : []),
	extraNote: (d) => (d.personal ? 'Personal information: never published.' : !d.published ? 'Never published.' : null)
});

/** The constraints of a column in words, read from its JSON Schema. */
export const columnRules = dictionary.columnRules;
export const dictionaryColumn = dictionary.dictionaryColumn;
/** Every column, grouped as on the /schema page. */
export const dataDictionary = dictionary.dataDictionary;
/** A one-cell summary of a column for a spreadsheet note. */
export const columnNote = dictionary.columnNote;
