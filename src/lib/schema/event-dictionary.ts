// The data dictionary of the practice event: every column with its meaning, unit and rules in words,
// derived from the schema (practice-event.ts). Feeds the /schema page's events section and the XLSX
// template's notes. Pure. The wording shared with the record dictionary is built by column-schema.ts's
// makeDictionary.
import { makeDictionary, type DictionaryColumnOf, type DictionaryGroupOf } from './column-schema';
import { eventColumnJsonSchema } from './event-json-schema';
import {
	EVENT_COLUMN_GROUPS,
	EVENT_COLUMN_INFO,
	PRACTICE_EVENT_COLUMNS,
	type EventColumnGroup,
	type EventColumnInfo
} from './practice-event';

export type EventDictionaryColumn = DictionaryColumnOf<EventColumnInfo>;
export type EventDictionaryGroup = DictionaryGroupOf<EventColumnGroup, EventColumnInfo>;

function requiredText(info: EventColumnInfo): string {
	if (info.requirement === 'always') return 'Required';
	if (info.requirement === 'per-kind') return `Required for ${info.required_for!.join(', ')}`;
	return 'Optional';
}

const dictionary = makeDictionary({
	columns: PRACTICE_EVENT_COLUMNS,
	info: EVENT_COLUMN_INFO,
	groups: EVENT_COLUMN_GROUPS,
	jsonSchema: eventColumnJsonSchema,
	requiredText,
	numberForm: 'digits and a decimal point only (no commas or units)',
	extraRules: (info) => (info.kinds ? [`used for ${info.kinds.join(', ')} events`] : []),
	extraNote: () => null
});

export const eventColumnRules = dictionary.columnRules;
export const eventDictionaryColumn = dictionary.dictionaryColumn;
export const eventDataDictionary = dictionary.dataDictionary;
export const eventColumnNote = dictionary.columnNote;
