// The event checker: turns one row of cells (CSV, XLSX, NDJSON or JSON) into a normalised
// PracticeEventV1 plus findings. The common part (header, cell reading, required values, messages) is
// the record checker's SchemaRowChecker (check-records.ts); here are the event's own rules: the
// practice must be one of the district's records, the date not in the future nor before the install
// date, the kind-specific columns, and one event per practice, date and kind in a file. Runs on the
// server and in the CLI's offline check. Pure.
import { practiceByCode } from '../domain/practice-catalog';
import { normaliseHeader, SchemaRowChecker, type RowSchema } from './check-records';
import type { Finding } from './findings';
import {
	EVENT_COLUMN_INFO,
	EVENT_KINDS,
	EVENT_REQUIRED_COLUMNS,
	eventColumnSchema,
	eventIdentity,
	isPracticeEventColumn,
	PRACTICE_EVENT_COLUMNS,
	type EventKind,
	type PracticeEventColumn,
	type PracticeEventV1
} from './practice-event';

/** What the checker knows of one of the district's practice records. */
export interface KnownPractice {
	practice_code: string;
	installed_on: string;
	withdrawn_on: string | null;
}

export interface EventCheckContext {
	/** The hub's today, YYYY-MM-DD. */
	today: string;
	/** The district's practice records by local id; null (offline) skips the rules that need them. */
	practices: ReadonlyMap<string, KnownPractice> | null;
}

export interface EventRowResult {
	record: PracticeEventV1 | null;
	findings: Finding[];
}

export interface EventChecker {
	header(columns: string[], headerRow?: number): Finding[];
	row(values: Record<string, unknown>, row: number): EventRowResult;
}

const EVENT_ROWS: RowSchema<PracticeEventColumn> = {
	columns: PRACTICE_EVENT_COLUMNS,
	info: EVENT_COLUMN_INFO,
	required: EVENT_REQUIRED_COLUMNS,
	isColumn: isPracticeEventColumn,
	schemaOf: eventColumnSchema,
	noun: 'event',
	rowNoun: 'event',
	template: 'events template',
	unknown: () => ({ tail: '', rule: { expected: [...PRACTICE_EVENT_COLUMNS] } }),
	// Kinds are matched without regard to case, and a space or hyphen stands for an underscore.
	normalise: (col, value) => (col === 'kind' && typeof value === 'string' ? normaliseHeader(value) : value)
};
const DETAIL_COLUMNS = PRACTICE_EVENT_COLUMNS.filter((c) => EVENT_COLUMN_INFO[c].kinds !== null);

/** The event checker's state for one file: the common checks (check-records.ts), then the event's own rules. */
class Checker extends SchemaRowChecker<PracticeEventColumn, PracticeEventV1> implements EventChecker {
	private readonly firstRowOf = new Map<string, number>();

	constructor(private readonly ctx: EventCheckContext) {
		super(EVENT_ROWS);
	}

	protected finish(rec: Record<string, unknown>, findings: Finding[]): EventRowResult {
		return { record: rec as PracticeEventV1, findings };
	}

	protected rules(rec: Record<string, unknown>): void {
		const rowNo = this.rowNo;
		// 3. Kind-specific columns.
		const kind = rec.kind as EventKind | null;
		if (kind !== null) {
			for (const col of DETAIL_COLUMNS) {
				const info = EVENT_COLUMN_INFO[col];
				if (info.required_for?.includes(kind) && rec[col] === null && !this.isBad(col))
					this.err(
						col,
						'required-for-kind',
						`${col} is empty, but a ${EVENT_KINDS[kind].title.toLowerCase()} must say ${info.title.toLowerCase()} (${info.unit}).`,
						{ rule: 'required-for-kind', kind }
					);
				if (rec[col] !== null && !info.kinds!.includes(kind))
					this.err(
						col,
						'not-applicable',
						`${col} applies to ${info.kinds!.join(', ')} events only; it is kept but not used for ${kind} events.`,
						{ rule: 'kinds', expected: info.kinds },
						'warning'
					);
			}
		}

		// 4. The date.
		const on = rec.event_on as string | null;
		if (on !== null && on > this.ctx.today)
			this.err(
				'event_on',
				'date-in-future',
				`event_on is ${on}, which is in the future (today is ${this.ctx.today}). Send an event once it has happened.`,
				{
					rule: 'not-after',
					date: this.ctx.today
				}
			);

		// 5. The practice: one of the district's records; the event within its life.
		const localId = rec.local_id as string | null;
		const practices = this.ctx.practices;
		if (localId !== null && practices) {
			const p = practices.get(localId);
			if (!p)
				this.err(
					'local_id',
					'practice-unknown',
					`local_id ${localId} is not a practice record of your district at the hub. Send the practice record first (or check the id).`,
					{ rule: 'known-practice' }
				);
			else {
				if (on !== null && on < p.installed_on)
					this.err('event_on', 'before-installed', `event_on (${on}) is before the practice was installed (${p.installed_on}).`, {
						rule: 'not-before',
						installed_on: p.installed_on
					});
				if (on !== null && p.withdrawn_on !== null && on > p.withdrawn_on)
					this.err(
						'event_on',
						'after-withdrawn',
						`event_on (${on}) is after the practice was withdrawn (${p.withdrawn_on}). Check the date or the practice.`,
						{ rule: 'not-after', withdrawn_on: p.withdrawn_on },
						'warning'
					);
				const usual = kind !== null ? EVENT_KINDS[kind].practices : null;
				if (usual && !(usual as readonly string[]).includes(p.practice_code)) {
					const name = practiceByCode(p.practice_code)?.name ?? p.practice_code;
					this.err(
						'kind',
						'kind-unusual-for-practice',
						`A ${EVENT_KINDS[kind!].title.toLowerCase()} is unusual for practice ${p.practice_code} (${name}); it is usually recorded for practice ${usual.join(', ')}. Check the kind and the local id.`,
						{ rule: 'usual-practices', expected: usual },
						'warning'
					);
				}
			}
		}

		// 6. One event per practice, date and kind in a file.
		if (localId !== null && on !== null && kind !== null) {
			const id = eventIdentity({ local_id: localId, event_on: on, kind });
			const first = this.firstRowOf.get(id);
			if (first !== undefined)
				this.err(
					'kind',
					'duplicate-event',
					`This ${kind} event of ${localId} on ${on} was already in row ${first} of this file. Each event may appear once per file.`,
					{ rule: 'unique', first_row: first, key: ['local_id', 'event_on', 'kind'] }
				);
			else this.firstRowOf.set(id, rowNo);
		}
	}
}

export function createEventChecker(ctx: EventCheckContext): EventChecker {
	return new Checker(ctx);
}
