// The practice event, schema version 1: the ONE source of the upkeep records districts send (CSV header
// = JSON property = XLSX header) — a woodchip top-up, a change of a control structure's stop-board
// setting, a mowing, a repair or an inspection of an installed practice. The JSON Schema, the OpenAPI
// component, the CSV/XLSX templates, the data dictionary section and the event checker are generated
// from or driven by this module. Pure: runs in the browser, on the server and in the CLI.
import { z } from 'zod';
import { optionalColumnsMask, readColumnMeta, withColumnMeta, type BaseColumnInfo, type BaseMeta } from './column-schema';
import { BIOREACTOR_CODE } from './practice-record';

export const EVENT_SCHEMA_VERSION = '1';

/**
 * The kinds of upkeep Runnel records (our own list). `practices`: the practices the kind usually
 * belongs to; another practice gets a warning (accepted, flagged), not a rejection. null: any practice.
 */
export const EVENT_KINDS = {
	media_top_up: {
		title: 'Media top-up',
		description: 'Woodchips (or other carbon media) added to a bioreactor bed as the old media settles and decays.',
		practices: [BIOREACTOR_CODE]
	},
	structure_setting: {
		title: 'Structure setting change',
		description: 'The stop boards of a water control structure set to a new height (e.g. raised after harvest, lowered before planting).',
		practices: ['554', '587', '604', BIOREACTOR_CODE]
	},
	mowing: {
		title: 'Mowing',
		description: 'The vegetative cover mowed or cut (to keep it healthy and woody growth out).',
		practices: ['327', '386', '390', '393', '412', '604']
	},
	repair: {
		title: 'Repair',
		description: 'Something fixed: a structure, an outlet, a washout, a broken tile, a damaged bed cover.',
		practices: null
	},
	inspection: {
		title: 'Inspection',
		description: 'The practice visited and checked; say what was found in the notes.',
		practices: null
	}
} as const satisfies Record<string, { title: string; description: string; practices: readonly string[] | null }>;

export type EventKind = keyof typeof EVENT_KINDS;
export const EVENT_KIND_VALUES = Object.keys(EVENT_KINDS) as [EventKind, ...EventKind[]];

/** The kinds that count as upkeep of a bioreactor for the overdue rule (src/lib/domain/upkeep.ts). */
export const BIOREACTOR_UPKEEP_KINDS: readonly EventKind[] = ['media_top_up', 'inspection'];

export const EVENT_COLUMN_GROUPS = {
	event: 'The event',
	details: 'Details by kind',
	notes: 'Notes'
} as const;
export type EventColumnGroup = keyof typeof EVENT_COLUMN_GROUPS;

export type EventRequirement = 'always' | 'per-kind' | 'optional';

export interface EventColumnInfo extends BaseColumnInfo<EventColumnGroup, EventRequirement> {
	/** Detail columns: the event kinds the column applies to (null: all). */
	kinds: EventKind[] | null;
	/** For per-kind columns: the kinds that require it. */
	required_for: EventKind[] | null;
}

type Meta = BaseMeta<EventColumnGroup, EventRequirement> & {
	kinds?: EventKind[];
	required_for?: EventKind[];
};

function column<T extends z.ZodType>(schema: T, m: Meta): T {
	return withColumnMeta(schema, m, {
		...(m.kinds ? { 'x-event-kinds': m.kinds } : {}),
		...(m.required_for ? { 'x-required-for': m.required_for } : {})
	});
}

const ID_PATTERN = /^[A-Za-z0-9._-]{1,64}$/;

/** The normalised event: every column present, numbers as numbers, dates 'YYYY-MM-DD', absent = null. */
export const PracticeEventV1Schema = z
	.object({
		local_id: column(z.string().regex(ID_PATTERN), {
			title: 'Practice local id',
			description:
				"The district's own id of the practice record this event belongs to (the record's `local_id`). The record must already be at the hub.",
			group: 'event',
			kind: 'text',
			requirement: 'always',
			example: 'BLH-2024-0042',
			hint: '1–64 characters: letters, digits, dot, underscore, hyphen'
		}),
		event_on: column(z.iso.date(), {
			title: 'Event date',
			description: "The day the work was done. Not in the future, and not before the practice's install date.",
			group: 'event',
			kind: 'date',
			requirement: 'always',
			example: '2026-04-20',
			hint: 'YYYY-MM-DD, a real calendar date'
		}),
		kind: column(z.enum(EVENT_KIND_VALUES), {
			title: 'Kind',
			description: `What was done: ${EVENT_KIND_VALUES.map((k) => `\`${k}\` (${EVENT_KINDS[k].title.toLowerCase()})`).join(', ')}. One event per practice, date and kind: sending it again updates it.`,
			group: 'event',
			kind: 'enum',
			requirement: 'always',
			example: 'inspection',
			hint: EVENT_KIND_VALUES.join(', ')
		}),
		stop_board_height_in: column(z.number().min(0).max(240).multipleOf(0.25).nullable(), {
			title: 'Stop-board height',
			description:
				'For a structure setting change: the height of the top of the stop boards above the structure floor after the change. Required for `structure_setting`.',
			group: 'details',
			kind: 'number',
			requirement: 'per-kind',
			unit: 'inches',
			example: 36,
			hint: '0 to 240, in quarter inches at most',
			kinds: ['structure_setting'],
			required_for: ['structure_setting']
		}),
		structure_id: column(z.string().min(1).max(64).nullable(), {
			title: 'Structure id',
			description: "For a structure setting change: the district's own name for the control structure, when the practice has several.",
			group: 'details',
			kind: 'text',
			requirement: 'optional',
			example: 'CS-2',
			hint: 'up to 64 characters',
			kinds: ['structure_setting']
		}),
		media_added_cu_yd: column(z.number().positive().max(5000).multipleOf(0.01).nullable(), {
			title: 'Media added',
			description: 'For a media top-up: the volume of woodchips (or other media) added.',
			group: 'details',
			kind: 'number',
			requirement: 'optional',
			unit: 'cubic yards',
			example: 40,
			hint: 'greater than 0, at most 2 decimals',
			kinds: ['media_top_up']
		}),
		notes: column(z.string().min(1).max(2000).nullable(), {
			title: 'Notes',
			description: 'What was found or done, in the district’s words. Never published.',
			group: 'notes',
			kind: 'text',
			requirement: 'optional',
			example: 'Outlet clear; chips settled about 6 inches.',
			hint: 'up to 2000 characters'
		})
	})
	.meta({
		title: `Runnel practice event, schema version ${EVENT_SCHEMA_VERSION}`,
		description:
			'One upkeep event of an installed practice, keyed by the practice’s local id, the date and the kind. CSV header = JSON property = XLSX header.'
	});

export type PracticeEventV1 = z.output<typeof PracticeEventV1Schema>;
export type PracticeEventColumn = keyof PracticeEventV1;

export const PRACTICE_EVENT_COLUMNS = Object.keys(PracticeEventV1Schema.shape) as PracticeEventColumn[];
export const EVENT_REQUIRED_COLUMNS: readonly PracticeEventColumn[] = ['local_id', 'event_on', 'kind'];

/** What a client sends: the optional columns may be omitted. */
export const PracticeEventV1InputSchema = PracticeEventV1Schema.partial(
	optionalColumnsMask(PRACTICE_EVENT_COLUMNS, EVENT_REQUIRED_COLUMNS)
);

export function eventColumnSchema(name: PracticeEventColumn): z.ZodType {
	return PracticeEventV1Schema.shape[name];
}

function readInfo(name: PracticeEventColumn): EventColumnInfo {
	const { meta: m, ...base } = readColumnMeta<EventColumnGroup, EventRequirement>(name, eventColumnSchema(name));
	return {
		...base,
		kinds: (m['x-event-kinds'] as EventKind[] | undefined) ?? null,
		required_for: (m['x-required-for'] as EventKind[] | undefined) ?? null
	};
}

export const EVENT_COLUMN_INFO: Readonly<Record<PracticeEventColumn, EventColumnInfo>> = Object.fromEntries(
	PRACTICE_EVENT_COLUMNS.map((c) => [c, readInfo(c)])
) as Record<PracticeEventColumn, EventColumnInfo>;

export function isPracticeEventColumn(name: string): name is PracticeEventColumn {
	return Object.hasOwn(PracticeEventV1Schema.shape, name);
}

/** The identity of an event inside one district: the practice, the day and the kind. */
export function eventIdentity(e: Pick<PracticeEventV1, 'local_id' | 'event_on' | 'kind'>): string {
	return `${e.local_id}\u0000${e.event_on}\u0000${e.kind}`;
}

export const EVENT_CSV_TEMPLATE_FILE_NAME = `runnel-practice-events-v${EVENT_SCHEMA_VERSION}.csv`;
export const EVENT_XLSX_TEMPLATE_FILE_NAME = `runnel-practice-events-v${EVENT_SCHEMA_VERSION}.xlsx`;

/** The CSV template: one header line (CRLF). */
export function eventCsvTemplate(): string {
	return `${PRACTICE_EVENT_COLUMNS.join(',')}\r\n`;
}
