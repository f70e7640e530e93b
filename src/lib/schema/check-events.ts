// The event checker: turns one row of cells (CSV, XLSX, NDJSON or JSON) into a normalised
// PracticeEventV1 plus findings — the same findings shape, cell reading and messages as the record
// checker (check-records.ts), with the event's own rules: the practice must be one of the district's
// records, the date not in the future nor before the install date, the kind-specific columns, and one
// event per practice, date and kind in a file. Runs on the server and in the CLI's offline check. Pure.
import { cellRef } from '../domain/cell-ref';
import { practiceByCode } from '../domain/practice-catalog';
import { display, normaliseHeader, readCell, zodProblem, type Problem } from './check-records';
import type { Finding, FindingSeverity } from './findings';
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

const N = PRACTICE_EVENT_COLUMNS.length;
const INDEX = Object.fromEntries(PRACTICE_EVENT_COLUMNS.map((c, i) => [c, i])) as Record<PracticeEventColumn, number>;
const SCHEMAS = PRACTICE_EVENT_COLUMNS.map((c) => eventColumnSchema(c));
const DETAIL_COLUMNS = PRACTICE_EVENT_COLUMNS.filter((c) => EVENT_COLUMN_INFO[c].kinds !== null);

class Checker implements EventChecker {
	private headerMode = false;
	private headerFailed = false;
	private readonly keyAt: Array<string | undefined> = [];
	private readonly numberAt: Array<number | undefined> = [];
	private readonly unknownSeen = new Set<string>();
	private readonly firstRowOf = new Map<string, number>();
	private rowNo = 0;
	private findings: Finding[] = [];
	private raws: unknown[] = [];

	constructor(private readonly ctx: EventCheckContext) {}

	private finding(
		p: Problem,
		row: number | null,
		col: PracticeEventColumn | null,
		raw: unknown,
		name?: string,
		number?: number | null
	): Finding {
		const n = number !== undefined ? number : col ? (this.numberAt[INDEX[col]] ?? null) : null;
		return {
			code: p.code,
			severity: p.severity,
			row,
			column: name ?? col,
			column_number: n,
			cell: n !== null && row !== null && this.headerMode ? cellRef(n, row) : null,
			value: display(raw),
			rule: p.rule,
			message: p.message
		};
	}

	private err(col: PracticeEventColumn, code: string, message: string, rule: Record<string, unknown>, severity: FindingSeverity = 'error') {
		this.findings.push(this.finding({ code, severity, message, rule }, this.rowNo, col, this.raws[INDEX[col]] ?? null));
	}

	header(columns: string[], headerRow = 1): Finding[] {
		this.headerMode = true;
		const out: Finding[] = [];
		const fileLevel = (f: Finding, n: number): Finding => ({ ...f, row: null, cell: cellRef(n, headerRow) });
		columns.forEach((raw, i) => {
			const n = i + 1;
			const name = raw.trim();
			const key = normaliseHeader(raw);
			if (name === '') {
				const p: Problem = {
					code: 'blank-column-header',
					severity: 'warning',
					message: `Column ${cellRef(n, headerRow).replace(/\d+$/, '')} has no header; its cells are ignored.`,
					rule: { rule: 'header' }
				};
				out.push(fileLevel(this.finding(p, null, null, null, '', n), n));
				return;
			}
			if (isPracticeEventColumn(key)) {
				const first = this.numberAt[INDEX[key]];
				if (first !== undefined) {
					const p: Problem = {
						code: 'duplicate-column',
						severity: 'error',
						message: `The column ${key} appears twice (columns ${first} and ${n}). Keep one of them.`,
						rule: { rule: 'unique-header', first_column: first }
					};
					out.push(fileLevel(this.finding(p, null, key, name, undefined, n), n));
					return;
				}
				this.keyAt[INDEX[key]] = raw;
				this.numberAt[INDEX[key]] = n;
				return;
			}
			const p: Problem = {
				code: 'unknown-column',
				severity: 'warning',
				message: `The column ${name} is not part of the event schema; its values are ignored.`,
				rule: { rule: 'known-columns', expected: [...PRACTICE_EVENT_COLUMNS] }
			};
			out.push(fileLevel(this.finding(p, null, null, name, name, n), n));
		});
		for (const c of EVENT_REQUIRED_COLUMNS) {
			if (this.numberAt[INDEX[c]] === undefined) {
				const p: Problem = {
					code: 'missing-column',
					severity: 'error',
					message: `The file has no ${c} column. It is required; add it to the header row (see the events template).`,
					rule: { rule: 'required-column' }
				};
				out.push(this.finding(p, null, c, null, undefined, null));
			}
		}
		this.headerFailed = out.some((f) => f.severity === 'error');
		return out;
	}

	row(values: Record<string, unknown>, rowNo: number): EventRowResult {
		const findings: Finding[] = [];
		const raws: unknown[] = new Array(N);
		this.rowNo = rowNo;
		this.findings = findings;
		this.raws = raws;
		if (this.headerMode) {
			for (let i = 0; i < N; i++) {
				const key = this.keyAt[i];
				if (key !== undefined && Object.hasOwn(values, key)) raws[i] = values[key];
			}
		} else {
			for (const key in values) {
				if (!Object.hasOwn(values, key)) continue;
				const col = normaliseHeader(key);
				if (isPracticeEventColumn(col)) {
					if (raws[INDEX[col]] === undefined) raws[INDEX[col]] = values[key];
					continue;
				}
				if (!this.unknownSeen.has(key)) {
					this.unknownSeen.add(key);
					const p: Problem = {
						code: 'unknown-column',
						severity: 'warning',
						message: `The property ${key} (first seen in row ${rowNo}) is not part of the event schema; it is ignored.`,
						rule: { rule: 'known-columns', first_row: rowNo, expected: [...PRACTICE_EVENT_COLUMNS] }
					};
					findings.push(this.finding(p, null, null, null, key, null));
				}
			}
		}

		// 1. Each cell on its own: kind, then the zod rule of the column.
		const rec: Record<string, unknown> = {};
		const bad: boolean[] = new Array(N).fill(false);
		for (let i = 0; i < N; i++) {
			const col = PRACTICE_EVENT_COLUMNS[i];
			const info = EVENT_COLUMN_INFO[col];
			const raw = raws[i];
			let r = readCell(col, raw, info);
			// Kinds are matched without regard to case, and a space or hyphen stands for an underscore.
			if (col === 'kind' && typeof r.value === 'string') r = { ...r, value: normaliseHeader(r.value) };
			if (r.warnings) for (const w of r.warnings) findings.push(this.finding(w, rowNo, col, raw));
			if (r.problem) {
				findings.push(this.finding(r.problem, rowNo, col, raw));
				bad[i] = true;
				rec[col] = null;
				continue;
			}
			if (r.value === null) {
				rec[col] = null;
				continue;
			}
			const parsed = SCHEMAS[i].safeParse(r.value);
			if (!parsed.success) {
				findings.push(this.finding(zodProblem(col, r.value, parsed.error.issues[0], info.hint), rowNo, col, raw));
				bad[i] = true;
				rec[col] = null;
				continue;
			}
			rec[col] = parsed.data;
		}
		const isBad = (c: PracticeEventColumn) => bad[INDEX[c]];

		// 2. Required values.
		for (const col of EVENT_REQUIRED_COLUMNS) {
			if (rec[col] === null && !isBad(col)) {
				if (this.headerMode && this.numberAt[INDEX[col]] === undefined) continue;
				this.err(col, 'required-missing', `${col} is empty. Every event needs ${EVENT_COLUMN_INFO[col].title.toLowerCase()}.`, {
					rule: 'required'
				});
			}
		}

		// 3. Kind-specific columns.
		const kind = rec.kind as EventKind | null;
		if (kind !== null) {
			for (const col of DETAIL_COLUMNS) {
				const info = EVENT_COLUMN_INFO[col];
				if (info.required_for?.includes(kind) && rec[col] === null && !isBad(col))
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

		let hasError = this.headerFailed;
		for (const f of findings) if (f.severity === 'error' && f.row !== null) hasError = true;
		return { record: hasError ? null : (rec as PracticeEventV1), findings };
	}
}

export function createEventChecker(ctx: EventCheckContext): EventChecker {
	return new Checker(ctx);
}
