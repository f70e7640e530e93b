// The record checker: turns one row of cells (from CSV, XLSX, NDJSON or JSON) into a normalised
// PracticeRecordV1 plus findings. The same code runs on the server and in the CLI's offline `check`.
// Per-cell rules come from the zod schema in practice-record.ts (the one source); the cross-field,
// per-practice, district and plausibility rules live here. Pure (relative imports only).
import type { z } from 'zod';
import { acreageBounds } from '../domain/acreage-plausibility';
import { isoDateOfUtc, parseDateText } from '../domain/calendar-date';
import { cellRef } from '../domain/cell-ref';
import { countyCodes, type CountyShapes } from '../domain/county-shapes';
import { parseNumberText } from '../domain/number-text';
import { practiceByCode, PRACTICE_CODES } from '../domain/practice-catalog';
import { geoContains } from 'd3-geo';
import type { BaseColumnInfo } from './column-schema';
import type { Finding, FindingSeverity } from './findings';
import {
	COLUMN_INFO,
	columnSchema,
	isPracticeRecordColumn,
	PRACTICE_RECORD_COLUMNS,
	REQUIRED_COLUMNS,
	type ColumnKind,
	type PracticeRecordColumn,
	type PracticeRecordV1
} from './practice-record';

export interface CheckContext {
	/** 2-digit FIPS code of the hub's state. */
	stateFips: string;
	/** Counties the district serves; null skips the served-county check (offline check without a district). */
	districtCounties: ReadonlySet<string> | null;
	/** The hub's today, YYYY-MM-DD (dates after it are in the future). */
	today: string;
	/** The state's county shapes (GeoJSON, WGS84) for point-in-county warnings; omit to skip. */
	countyShapes?: CountyShapes;
	/** The state's county FIPS codes; defaults to the ids of `countyShapes`; omit both to check the state prefix only. */
	stateCounties?: ReadonlySet<string>;
	/** Design screening (e.g. bioreactor sizing) run on each valid record; its findings are added to the row's. */
	designChecks?: (r: PracticeRecordV1) => Finding[];
}

export interface RowResult {
	/** The normalised record, or null when the row has any error (or the header had one). */
	record: PracticeRecordV1 | null;
	/**
	 * The row's findings. In keyed mode (JSON/NDJSON, no header) the first sighting of an unknown
	 * property also comes back here as a file-level finding (row null).
	 */
	findings: Finding[];
}

export interface RecordChecker {
	/** Checks a header row (CSV/XLSX). `headerRow` is the sheet row the header sits on (default 1). */
	header(columns: string[], headerRow?: number): Finding[];
	/** Checks one row. `values` is keyed by header name (as sent) or, without a header, by property name. */
	row(values: Record<string, unknown>, row: number): RowResult;
}

export const REDACTED = '[personal]';
const MAX_VALUE_CHARS = 200;

/** The sentence form of a column for messages: its header as the district wrote it in the template. */
const q = (c: string) => c;
/** A value as shown in a message: in double quotes, shortened. */
const quoted = (v: unknown) => `"${display(v)}"`;
/** A cell value for a message; personal columns never show theirs. */
const shownValue = (col: string, v: unknown) => (isPracticeRecordColumn(col) && COLUMN_INFO[col].personal ? `"${REDACTED}"` : quoted(v));

export interface Problem {
	code: string;
	severity: FindingSeverity;
	message: string;
	rule: Record<string, unknown> | null;
}

export function display(v: unknown): string | null {
	if (v === null || v === undefined) return null;
	let s: string;
	if (v instanceof Date) s = isoDateOfUtc(v) ?? String(v);
	else if (typeof v === 'string') s = v;
	else if (typeof v === 'number' || typeof v === 'boolean') s = String(v);
	else {
		try {
			s = JSON.stringify(v) ?? String(v);
		} catch {
			s = String(v);
		}
	}
	return s.length > MAX_VALUE_CHARS ? `${s.slice(0, MAX_VALUE_CHARS)}…` : s;
}

const typeName = (v: unknown) =>
	v instanceof Date
		? 'a date'
		: Array.isArray(v)
			? 'a list'
			: v === null
				? 'null'
				: typeof v === 'object'
					? 'an object'
					: typeof v === 'boolean'
						? 'true/false'
						: typeof v;

// Characters a record may never hold: C0 controls and DEL (notes may keep tabs and line breaks).
// eslint-disable-next-line no-control-regex -- matching control characters is the point
const CONTROL = /[\u0000-\u0008\u000b\u000c\u000e-\u001f\u007f]/;
// eslint-disable-next-line no-control-regex -- matching control characters is the point
const CONTROL_STRICT = /[\u0000-\u001f\u007f]/;
// A cell a spreadsheet would run as a formula when the text is opened again (OWASP "CSV Injection").
const FORMULA_START = /^(?:=|@|[+-][^\d\s.])/;

function looksLikeFormula(s: string): boolean {
	return FORMULA_START.test(s);
}

function wrongTypeProblem(col: string, kind: ColumnKind, detail: string): Problem {
	return {
		code: 'wrong-type',
		severity: 'error',
		message: `${q(col)} ${detail}`,
		rule: { rule: 'type', expected: kind === 'integer' ? 'integer' : kind === 'number' ? 'number' : kind === 'date' ? 'date' : 'text' }
	};
}

/**
 * The checks of one cell, by column kind. Returns the parsed value or a problem. `info` defaults to the
 * record column's; the event checker (check-events.ts) passes its own columns' name and kind.
 */
export function readCell(
	col: string,
	raw: unknown,
	info: { name: string; kind: ColumnKind } = COLUMN_INFO[col as PracticeRecordColumn]
): { value: unknown; problem?: Problem; warnings?: Problem[] } {
	if (typeof raw === 'string' && raw.trim() === '') return { value: null };
	if (raw === null || raw === undefined) return { value: null };

	if (typeof raw === 'object' && !(raw instanceof Date))
		return { value: null, problem: wrongTypeProblem(col, info.kind, `holds ${typeName(raw)}; send a single value.`) };
	if (typeof raw === 'boolean')
		return {
			value: null,
			problem: wrongTypeProblem(
				col,
				info.kind,
				`holds true/false; expected ${info.kind === 'number' || info.kind === 'integer' ? 'a number' : 'text'}.`
			)
		};

	if (typeof raw === 'string') {
		if (!raw.isWellFormed()) {
			return {
				value: null,
				problem: {
					code: 'bad-characters',
					severity: 'error',
					message: `${q(col)} contains broken characters (an invalid Unicode sequence). Retype the value.`,
					rule: { rule: 'characters' }
				}
			};
		}
		const controls = info.name === 'notes' ? CONTROL : CONTROL_STRICT;
		if (controls.test(raw)) {
			return {
				value: null,
				problem: {
					code: 'bad-characters',
					severity: 'error',
					message: `${q(col)} contains invisible control characters${info.name === 'notes' ? '' : ' (such as a line break or tab)'}. Remove them and send the row again.`,
					rule: { rule: 'characters' }
				}
			};
		}
	}

	switch (info.kind) {
		case 'text':
		case 'code':
		case 'enum': {
			if (raw instanceof Date)
				return {
					value: null,
					problem: wrongTypeProblem(
						col,
						info.kind,
						`holds a date, but it is ${info.kind === 'text' ? 'text' : 'a code'}. Format the column as Text in the spreadsheet and retype the value.`
					)
				};
			let s: string;
			if (typeof raw === 'number') {
				if (!Number.isFinite(raw)) return { value: null, problem: wrongTypeProblem(col, info.kind, 'is not a usable value.') };
				s = String(raw);
			} else s = String(raw).trim();
			if (looksLikeFormula(s)) {
				if (info.kind !== 'text')
					return {
						value: null,
						problem: {
							code: 'formula-in-cell',
							severity: 'error',
							message: `${q(col)} holds a formula (${shownValue(col, s)}). Send the value itself, not a formula.`,
							rule: { rule: 'no-formula' }
						}
					};
				return {
					value: s,
					warnings: [
						{
							code: 'formula-in-cell',
							severity: 'warning',
							message: `${q(col)} starts like a spreadsheet formula. It is kept as plain text and never run; check it is what you meant.`,
							rule: { rule: 'no-formula' }
						}
					]
				};
			}
			if (info.kind === 'enum' && col === 'status') s = s.toLowerCase();
			return { value: s };
		}
		case 'date': {
			if (raw instanceof Date) {
				const iso = isoDateOfUtc(raw);
				if (!iso) return { value: null, problem: dateProblem(col, String(raw), { ok: false, problem: 'shape' }) };
				return { value: iso };
			}
			if (typeof raw === 'number')
				return {
					value: null,
					problem: wrongTypeProblem(
						col,
						info.kind,
						`holds the number ${shownValue(col, raw)}, not a date. In a spreadsheet, format the cell as a date, or type the date as YYYY-MM-DD.`
					)
				};
			const s = String(raw).trim();
			if (looksLikeFormula(s))
				return {
					value: null,
					problem: {
						code: 'formula-in-cell',
						severity: 'error',
						message: `${q(col)} holds a formula. Send the date itself as YYYY-MM-DD.`,
						rule: { rule: 'no-formula' }
					}
				};
			const r = parseDateText(s);
			if (!r.ok) return { value: null, problem: dateProblem(col, s, r) };
			return { value: r.value };
		}
		case 'number':
		case 'integer': {
			if (raw instanceof Date) return { value: null, problem: wrongTypeProblem(col, info.kind, 'holds a date; expected a number.') };
			if (typeof raw === 'number') {
				if (!Number.isFinite(raw))
					return {
						value: null,
						problem: {
							code: 'not-a-number',
							severity: 'error',
							message: `${q(col)} is not a finite number (it is too large or not a number).`,
							rule: { rule: 'type', expected: 'number' }
						}
					};
				return { value: Object.is(raw, -0) ? 0 : raw };
			}
			const s = String(raw).trim();
			if (s.startsWith('='))
				return {
					value: null,
					problem: {
						code: 'formula-in-cell',
						severity: 'error',
						message: `${q(col)} holds a formula (${shownValue(col, s)}). Send the number itself.`,
						rule: { rule: 'no-formula' }
					}
				};
			const r = parseNumberText(s);
			if (r.ok) return { value: r.value };
			const shown = shownValue(col, s);
			const problems: Record<typeof r.problem, Problem> = {
				comma: {
					code: 'number-format',
					severity: 'error',
					message: `${q(col)} is ${shown}: numbers may not contain commas. Use a point for decimals (1.5) and no thousands separators (1500).`,
					rule: { rule: 'number-format', format: 'digits with an optional decimal point, e.g. 1500.25' }
				},
				exponent: {
					code: 'number-format',
					severity: 'error',
					message: `${q(col)} is ${shown}: write the number in full (like 1500 or 0.25), not in scientific notation.`,
					rule: { rule: 'number-format', format: 'digits with an optional decimal point, e.g. 1500.25' }
				},
				symbols: {
					code: 'number-format',
					severity: 'error',
					message: `${q(col)} is ${shown}: write only the number, without units, currency signs, percent signs or spaces.`,
					rule: { rule: 'number-format', format: 'digits with an optional decimal point, e.g. 1500.25' }
				},
				'not-a-number': {
					code: 'not-a-number',
					severity: 'error',
					message: `${q(col)} is ${shown}, which is not a number. Leave the cell empty when the value is unknown.`,
					rule: { rule: 'type', expected: 'number' }
				},
				'too-large': {
					code: 'not-a-number',
					severity: 'error',
					message: `${q(col)} is too large to be a number.`,
					rule: { rule: 'type', expected: 'number' }
				}
			};
			return { value: null, problem: problems[r.problem] };
		}
	}
}

function dateProblem(col: string, s: string, r: ReturnType<typeof parseDateText>): Problem {
	const shown = shownValue(col, s);
	const rule = { rule: 'date', format: 'YYYY-MM-DD' };
	if (r.ok) throw new Error('unreachable');
	switch (r.problem) {
		case 'slashes':
			return {
				code: 'bad-date',
				severity: 'error',
				message: `${q(col)} is ${shown}, which can be read as two different dates. Write dates as YYYY-MM-DD, for example 2026-02-03 for 3 February 2026.`,
				rule
			};
		case 'with-time':
			return {
				code: 'bad-date',
				severity: 'error',
				message: `${q(col)} is ${shown}: send the date only, as YYYY-MM-DD, without a time.`,
				rule
			};
		case 'not-a-day':
			return {
				code: 'bad-date',
				severity: 'error',
				message:
					r.daysInMonth !== undefined
						? `${q(col)} is ${shown}, which is not a real date (that month has ${r.daysInMonth} days).`
						: `${q(col)} is ${shown}, which is not a real date (the month must be 01 to 12).`,
				rule
			};
		default:
			return {
				code: 'bad-date',
				severity: 'error',
				message: `${q(col)} is ${shown}: write dates as YYYY-MM-DD, for example 2026-02-03.`,
				rule
			};
	}
}

/** Maps the first zod issue of a column to a plain finding. */
export function zodProblem(
	col: string,
	value: unknown,
	issue: z.core.$ZodIssue,
	hint: string | null = isPracticeRecordColumn(col) ? COLUMN_INFO[col].hint : null
): Problem {
	const shown = shownValue(col, value);
	switch (issue.code) {
		case 'too_small':
			if (issue.origin === 'number' || issue.origin === 'int') {
				const min = Number(issue.minimum);
				return {
					code: 'below-minimum',
					severity: 'error',
					message: issue.inclusive
						? `${q(col)} is ${shown}; it must be at least ${min}.`
						: `${q(col)} is ${shown}; it must be greater than ${min}.`,
					rule: { rule: 'minimum', minimum: min, exclusive: !issue.inclusive }
				};
			}
			return { code: 'required-missing', severity: 'error', message: `${q(col)} is empty.`, rule: { rule: 'required' } };
		case 'too_big':
			if (issue.origin === 'string')
				return {
					code: 'too-long',
					severity: 'error',
					message: `${q(col)} is ${String(value).length} characters long; the limit is ${Number(issue.maximum)}.`,
					rule: { rule: 'max-length', max: Number(issue.maximum) }
				};
			return {
				code: 'above-maximum',
				severity: 'error',
				message: issue.inclusive
					? `${q(col)} is ${shown}; it may be at most ${Number(issue.maximum)}.`
					: `${q(col)} is ${shown}; it must be less than ${Number(issue.maximum)}.`,
				rule: { rule: 'maximum', maximum: Number(issue.maximum), exclusive: !issue.inclusive }
			};
		case 'not_multiple_of':
			return {
				code: 'too-many-decimals',
				severity: 'error',
				message: `${q(col)} is ${shown}; use at most 2 decimals (for example ${Number(value).toFixed(2)}).`,
				rule: { rule: 'decimals', max: 2 }
			};
		case 'invalid_value':
			if (col === 'practice_code')
				return {
					code: 'not-in-list',
					severity: 'error',
					message: `${q(col)} is ${shown}, which is not a practice code Runnel knows. Use a practice standard number from the practice list, such as 340 or 605.`,
					rule: { rule: 'enum', expected: [...PRACTICE_CODES] }
				};
			return {
				code: 'not-in-list',
				severity: 'error',
				message: `${q(col)} is ${shown}; use one of: ${issue.values.map(String).join(', ')}.`,
				rule: { rule: 'enum', expected: issue.values }
			};
		case 'invalid_format': {
			const pattern = 'pattern' in issue && issue.pattern ? String(issue.pattern).replace(/^\/|\/$/g, '') : undefined;
			let message = `${q(col)} is ${shown}, which is not in the right form${hint ? ` (${hint})` : ''}.`;
			if (col === 'county_fips' && /^\d{4}$/.test(String(value)))
				message = `${q(col)} is ${shown}: county codes have 5 digits. A spreadsheet may have dropped a leading zero; format the column as Text.`;
			if (col === 'huc12' && /^\d{11}$/.test(String(value)))
				message = `${q(col)} is ${shown}: watershed codes have 12 digits. A spreadsheet may have dropped a leading zero; format the column as Text.`;
			return {
				code: 'bad-format',
				severity: 'error',
				message,
				rule: { rule: 'pattern', ...(pattern ? { pattern } : {}), ...(hint ? { hint } : {}) }
			};
		}
		case 'invalid_type':
			if (issue.expected === 'int')
				return {
					code: 'not-an-integer',
					severity: 'error',
					message: `${q(col)} is ${shown}; it must be a whole number.`,
					rule: { rule: 'type', expected: 'integer' }
				};
			return {
				code: 'wrong-type',
				severity: 'error',
				message: `${q(col)} is ${shown}, which is not a valid value here.`,
				rule: { rule: 'type', expected: String(issue.expected) }
			};
		default:
			return {
				code: 'invalid-value',
				severity: 'error',
				message: `${q(col)} is ${shown}, which is not valid: ${issue.message}.`,
				rule: { rule: issue.code }
			};
	}
}

// Headers match case-insensitively, with spaces or hyphens standing for underscores (`Local ID`).
export const normaliseHeader = (s: string) =>
	s
		.trim()
		.toLowerCase()
		.replace(/[\s-]+/g, '_');
const loose = (s: string) => s.toLowerCase().replace(/[^a-z0-9]/g, '');
const LOOSE_NAMES = new Map(PRACTICE_RECORD_COLUMNS.map((c) => [loose(c), c]));

function suggestion(name: string): PracticeRecordColumn | null {
	const l = loose(name);
	if (!l) return null;
	const exact = LOOSE_NAMES.get(l);
	if (exact) return exact;
	if (l.length >= 5) {
		const prefixed = PRACTICE_RECORD_COLUMNS.filter((c) => loose(c).startsWith(l));
		if (prefixed.length === 1) return prefixed[0];
	}
	let best: PracticeRecordColumn | null = null;
	let bestD = 3;
	for (const c of PRACTICE_RECORD_COLUMNS) {
		const d = editDistance(l, loose(c), bestD);
		if (d < bestD) {
			bestD = d;
			best = c;
		}
	}
	return best;
}

function editDistance(a: string, b: string, cap: number): number {
	if (Math.abs(a.length - b.length) >= cap) return cap;
	let prev = Array.from({ length: b.length + 1 }, (_, j) => j);
	for (let i = 1; i <= a.length; i++) {
		const cur = [i];
		let rowMin = i;
		for (let j = 1; j <= b.length; j++) {
			cur[j] = Math.min(prev[j] + 1, cur[j - 1] + 1, prev[j - 1] + (a[i - 1] === b[j - 1] ? 0 : 1));
			rowMin = Math.min(rowMin, cur[j]);
		}
		if (rowMin >= cap) return cap;
		prev = cur;
	}
	return prev[b.length];
}

const EARLIEST_PLAUSIBLE_INSTALL = '1970-01-01';

/** What a row checker takes from its schema (the practice record, the practice event). */
export interface RowSchema<C extends string> {
	columns: readonly C[];
	info: Readonly<Record<C, BaseColumnInfo>>;
	/** Columns every file must have (as headers) and every row must fill. */
	required: readonly C[];
	isColumn: (name: string) => name is C;
	schemaOf: (col: C) => z.ZodType;
	/** The schema in messages: "not part of the {noun} schema". */
	noun: string;
	/** What a row is in messages: "Every {rowNoun} needs …". */
	rowNoun: string;
	/** The template a missing column points to. */
	template: string;
	/** Personal columns: their values never appear in findings. */
	personal?: (col: C) => boolean;
	/** An unknown column or property: the message's last words and the rule's own keys. */
	unknown: (name: string) => { tail: string; rule: Record<string, unknown> };
	/** A cell's value as read, before the column's zod rule (e.g. a list value normalised). */
	normalise?: (col: C, value: unknown) => unknown;
}

/**
 * What every row checker does the same way, parameterised by the schema: the header (known, duplicate,
 * blank, unknown and missing columns), reading a row by header or by property name, each cell on its own
 * (kind, then the column's zod rule) and the required values. The schema's own rules run in `rules`,
 * and `finish` turns a row without errors into its result. A class rather than closures: row() runs for
 * every row of large uploads, and per-row closures cost measurably (see `npm run bench -- check`).
 */
export abstract class SchemaRowChecker<C extends string, R> {
	private readonly index: Readonly<Record<C, number>>;
	private readonly schemas: z.ZodType[];
	/** Every column null, in order: copied per row so all records share one object shape. */
	private readonly empty: Readonly<Record<string, unknown>>;
	/** Header mode (CSV/XLSX): the header name and 1-based position of each schema column, by column index. */
	protected headerMode = false;
	private headerFailed = false;
	private readonly keyAt: Array<string | undefined> = [];
	protected readonly numberAt: Array<number | undefined> = [];
	/** Keyed mode (JSON): unknown properties already reported. */
	private readonly unknownSeen = new Set<string>();
	// The row being checked.
	protected rowNo = 0;
	protected findings: Finding[] = [];
	private raws: unknown[] = [];
	private bad: boolean[] = [];

	constructor(private readonly schema: RowSchema<C>) {
		this.index = Object.fromEntries(schema.columns.map((c, i) => [c, i])) as Record<C, number>;
		this.schemas = schema.columns.map((c) => schema.schemaOf(c));
		this.empty = Object.fromEntries(schema.columns.map((c) => [c, null]));
		this.header = this.header.bind(this);
		this.row = this.row.bind(this);
	}

	/** The schema's own rules of a row whose cells are read (`rec`: every column, null when absent or bad). */
	protected abstract rules(rec: Record<string, unknown>): void;
	/** The result of a row without errors. */
	protected abstract finish(rec: Record<string, unknown>, findings: Finding[]): { record: R | null; findings: Finding[] };

	/** The 1-based position of a column in the header, or null. */
	protected columnNumber(col: C): number | null {
		return this.numberAt[this.index[col]] ?? null;
	}

	/** True when the column's cell of the current row was unusable (already reported). */
	protected isBad(col: C): boolean {
		return this.bad[this.index[col]];
	}

	protected finding(
		p: Problem,
		row: number | null,
		col: C | null,
		raw: unknown,
		columnName?: string,
		columnNumberOverride?: number | null
	): Finding {
		const columnNumber = columnNumberOverride !== undefined ? columnNumberOverride : col ? (this.numberAt[this.index[col]] ?? null) : null;
		const personal = col && this.schema.personal ? this.schema.personal(col) : false;
		const v = display(raw);
		return {
			code: p.code,
			severity: p.severity,
			row,
			column: columnName ?? col,
			column_number: columnNumber,
			cell: columnNumber !== null && row !== null && this.headerMode ? cellRef(columnNumber, row) : null,
			value: v === null ? null : personal ? REDACTED : v,
			rule: p.rule,
			message: p.message
		};
	}

	/** Adds a finding about a column of the current row (its value as sent). */
	protected err(col: C, code: string, message: string, rule: Record<string, unknown>, severity: FindingSeverity = 'error'): void {
		this.findings.push(this.finding({ code, severity, message, rule }, this.rowNo, col, this.raws[this.index[col]] ?? null));
	}

	header(columns: string[], headerRow = 1): Finding[] {
		const schema = this.schema;
		this.headerMode = true;
		this.keyAt.length = 0;
		this.numberAt.length = 0;
		const out: Finding[] = [];
		const fileLevel = (f: Finding, n: number | null): Finding => ({ ...f, row: null, cell: n !== null ? cellRef(n, headerRow) : null });
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
			if (schema.isColumn(key)) {
				const first = this.numberAt[this.index[key]];
				if (first !== undefined) {
					const p: Problem = {
						code: 'duplicate-column',
						severity: 'error',
						message: `The column ${q(key)} appears twice (columns ${first} and ${n}). Keep one of them.`,
						rule: { rule: 'unique-header', first_column: first }
					};
					out.push(fileLevel(this.finding(p, null, key, name, undefined, n), n));
					return;
				}
				this.keyAt[this.index[key]] = raw;
				this.numberAt[this.index[key]] = n;
				return;
			}
			const unknown = schema.unknown(name);
			const p: Problem = {
				code: 'unknown-column',
				severity: 'warning',
				message: `The column ${q(name)} is not part of the ${schema.noun} schema; its values are ignored.${unknown.tail}`,
				rule: { rule: 'known-columns', ...unknown.rule }
			};
			out.push(fileLevel(this.finding(p, null, null, name, name, n), n));
		});
		for (const c of schema.required) {
			if (this.numberAt[this.index[c]] === undefined) {
				const p: Problem = {
					code: 'missing-column',
					severity: 'error',
					message: `The file has no ${q(c)} column. It is required; add it to the header row (see the ${schema.template}).`,
					rule: { rule: 'required-column' }
				};
				out.push(this.finding(p, null, c, null, undefined, null));
			}
		}
		this.headerFailed = out.some((f) => f.severity === 'error');
		return out;
	}

	row(values: Record<string, unknown>, rowNo: number): { record: R | null; findings: Finding[] } {
		const schema = this.schema;
		const columns = schema.columns;
		const findings: Finding[] = [];
		const raws: unknown[] = new Array(columns.length);
		this.rowNo = rowNo;
		this.findings = findings;
		this.raws = raws;

		if (this.headerMode) {
			for (let i = 0; i < raws.length; i++) {
				const key = this.keyAt[i];
				if (key !== undefined && Object.hasOwn(values, key)) raws[i] = values[key];
			}
		} else {
			for (const key in values) {
				if (!Object.hasOwn(values, key)) continue;
				const col = normaliseHeader(key);
				if (schema.isColumn(col)) {
					const i = this.index[col];
					if (raws[i] === undefined) raws[i] = values[key];
					continue;
				}
				if (!this.unknownSeen.has(key)) {
					this.unknownSeen.add(key);
					const unknown = schema.unknown(key);
					const p: Problem = {
						code: 'unknown-column',
						severity: 'warning',
						message: `The property ${q(key)} (first seen in row ${rowNo}) is not part of the ${schema.noun} schema; it is ignored.${unknown.tail}`,
						rule: { rule: 'known-columns', first_row: rowNo, ...unknown.rule }
					};
					findings.push(this.finding(p, null, null, null, key, null));
				}
			}
		}

		// 1. Each cell on its own: kind, then the zod rule of the column.
		const rec: Record<string, unknown> = { ...this.empty };
		const bad: boolean[] = new Array(raws.length).fill(false);
		this.bad = bad;
		for (let i = 0; i < columns.length; i++) {
			const col = columns[i];
			const info = schema.info[col];
			const raw = raws[i];
			let r = readCell(col, raw, info);
			if (schema.normalise && r.value !== null) r = { ...r, value: schema.normalise(col, r.value) };
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
			const parsed = this.schemas[i].safeParse(r.value);
			if (!parsed.success) {
				findings.push(this.finding(zodProblem(col, r.value, parsed.error.issues[0], info.hint), rowNo, col, raw));
				bad[i] = true;
				rec[col] = null;
				continue;
			}
			rec[col] = parsed.data;
		}

		// 2. Required values.
		for (const col of schema.required) {
			if (rec[col] === null && !bad[this.index[col]]) {
				if (this.headerMode && this.numberAt[this.index[col]] === undefined) continue; // reported once as missing-column
				this.err(col, 'required-missing', `${q(col)} is empty. Every ${schema.rowNoun} needs ${schema.info[col].title.toLowerCase()}.`, {
					rule: 'required'
				});
			}
		}

		// 3. The schema's own rules.
		this.rules(rec);

		let hasError = this.headerFailed;
		for (let i = 0; i < findings.length && !hasError; i++)
			if (findings[i].severity === 'error' && findings[i].row !== null) hasError = true;
		if (hasError) return { record: null, findings };
		return this.finish(rec, findings);
	}
}

const RECORD_ROWS: RowSchema<PracticeRecordColumn> = {
	columns: PRACTICE_RECORD_COLUMNS,
	info: COLUMN_INFO,
	required: REQUIRED_COLUMNS,
	isColumn: isPracticeRecordColumn,
	schemaOf: columnSchema,
	noun: 'record',
	rowNoun: 'row',
	template: 'template',
	personal: (col) => COLUMN_INFO[col].personal,
	unknown: (name) => {
		const hint = suggestion(name);
		return { tail: hint ? ` Did you mean ${q(hint)}?` : '', rule: hint ? { suggestion: hint } : {} };
	}
};
const DETAIL_COLUMNS = PRACTICE_RECORD_COLUMNS.filter((c) => COLUMN_INFO[c].practices !== null);

/** The record checker's state for one file: the common checks, then the record's own rules. */
class Checker extends SchemaRowChecker<PracticeRecordColumn, PracticeRecordV1> implements RecordChecker {
	private readonly stateCounties: ReadonlySet<string> | null;
	private readonly shapeById: Map<string, CountyShapes['features'][number]>;
	private readonly servedList: string[] | null;
	private readonly firstRowOfId = new Map<string, number>();

	constructor(private readonly ctx: CheckContext) {
		super(RECORD_ROWS);
		this.stateCounties = ctx.stateCounties ?? (ctx.countyShapes ? countyCodes(ctx.countyShapes) : null);
		this.shapeById = new Map((ctx.countyShapes?.features ?? []).map((f) => [String(f.id), f]));
		this.servedList = ctx.districtCounties ? [...ctx.districtCounties].sort() : null;
	}

	protected rules(rec: Record<string, unknown>): void {
		const ctx = this.ctx;
		const rowNo = this.rowNo;
		if (rec.status === null && !this.isBad('status')) rec.status = 'installed';

		// 3. Required per practice (the catalog's credited basis) and detail columns of other practices.
		const practice = typeof rec.practice_code === 'string' ? practiceByCode(rec.practice_code) : undefined;
		if (practice) {
			const basis = practice.credited_basis;
			if (rec[basis] === null && !this.isBad(basis)) {
				this.err(
					basis,
					'required-for-practice',
					`${q(basis)} is empty, but practice ${practice.code} (${practice.name}) is credited on ${basis === 'extent_acres' ? 'the acres it treats' : 'the drainage area it treats'}, so it is required.`,
					{ rule: 'required-for-practice', practice: practice.code, category: practice.category }
				);
			}
			for (const col of DETAIL_COLUMNS) {
				const only = COLUMN_INFO[col].practices!;
				if (rec[col] !== null && !only.includes(practice.code)) {
					this.err(
						col,
						'not-applicable',
						`${q(col)} applies to practice ${only.join(', ')} only; it is kept but not used for practice ${practice.code}.`,
						{ rule: 'practices', expected: only },
						'warning'
					);
				}
			}
		}

		// 4. Status and dates.
		const installed = rec.installed_on as string | null;
		const withdrawn = rec.withdrawn_on as string | null;
		if (rec.status === 'withdrawn' && withdrawn === null && !this.isBad('withdrawn_on')) {
			this.err(
				'withdrawn_on',
				'withdrawn-date-missing',
				`The status is withdrawn, so ${q('withdrawn_on')} must give the date it went out of service.`,
				{
					rule: 'required-when',
					when: { status: 'withdrawn' }
				}
			);
		}
		if (rec.status === 'installed' && withdrawn !== null) {
			this.err(
				'withdrawn_on',
				'withdrawn-date-without-status',
				`${q('withdrawn_on')} is filled in but the status is not withdrawn. Set ${q('status')} to withdrawn, or clear ${q('withdrawn_on')}.`,
				{ rule: 'only-when', when: { status: 'withdrawn' } }
			);
		}
		if (installed !== null && withdrawn !== null && withdrawn < installed) {
			this.err(
				'withdrawn_on',
				'withdrawn-before-installed',
				`${q('withdrawn_on')} (${withdrawn}) is before ${q('installed_on')} (${installed}).`,
				{
					rule: 'not-before',
					column: 'installed_on'
				}
			);
		}
		if (installed !== null && installed > ctx.today) this.future('installed_on', installed);
		if (withdrawn !== null && withdrawn > ctx.today) this.future('withdrawn_on', withdrawn);
		if (installed !== null && installed < EARLIEST_PLAUSIBLE_INSTALL)
			this.err(
				'installed_on',
				'date-implausible',
				`${q('installed_on')} is ${installed}, earlier than ${EARLIEST_PLAUSIBLE_INSTALL}. Check the year (a flag for review, by Runnel's own rule of thumb).`,
				{ rule: 'plausible-range', low: EARLIEST_PLAUSIBLE_INSTALL, basis: "Runnel's own rule of thumb" },
				'warning'
			);

		// 5. Money and coordinates.
		const total = rec.cost_total_usd as number | null;
		const share = rec.cost_share_usd as number | null;
		if (total !== null && share !== null && share > total)
			this.err(
				'cost_share_usd',
				'share-exceeds-total',
				`${q('cost_share_usd')} (${share}) is more than ${q('cost_total_usd')} (${total}).`,
				{
					rule: 'not-more-than',
					column: 'cost_total_usd'
				}
			);
		const lat = rec.latitude as number | null;
		const lon = rec.longitude as number | null;
		if ((lat === null) !== (lon === null) && !this.isBad('latitude') && !this.isBad('longitude')) {
			const missing = lat === null ? 'latitude' : 'longitude';
			this.err(missing, 'coordinates-incomplete', `Send latitude and longitude together: ${q(missing)} is empty.`, {
				rule: 'together',
				columns: ['latitude', 'longitude']
			});
		}

		// 6. County: the hub's state, a real county, served by the district.
		const county = rec.county_fips as string | null;
		let countyOk = false;
		if (county !== null) {
			if (!county.startsWith(ctx.stateFips)) {
				this.err(
					'county_fips',
					'county-wrong-state',
					`${q('county_fips')} is ${county}, a county outside this hub's state (its codes start with ${ctx.stateFips}).`,
					{ rule: 'state', state_fips: ctx.stateFips }
				);
			} else if (this.stateCounties && !this.stateCounties.has(county)) {
				this.err('county_fips', 'county-unknown', `${q('county_fips')} is ${county}, which is not a county code of this state.`, {
					rule: 'county-list',
					state_fips: ctx.stateFips
				});
			} else if (ctx.districtCounties && !ctx.districtCounties.has(county)) {
				this.err(
					'county_fips',
					'county-not-served',
					`${q('county_fips')} is ${county}, a county your district does not serve (your counties: ${this.servedList?.join(', ')}).`,
					{ rule: 'served-counties', expected: this.servedList }
				);
			} else countyOk = true;
		}

		// 7. Duplicate local id inside this file.
		const localId = rec.local_id as string | null;
		if (localId !== null) {
			const first = this.firstRowOfId.get(localId);
			if (first !== undefined)
				this.err(
					'local_id',
					'duplicate-local-id',
					`${q('local_id')} ${localId} was already used in row ${first} of this file. Each record may appear once per file.`,
					{ rule: 'unique', first_row: first }
				);
			else this.firstRowOfId.set(localId, rowNo);
		}

		// 8. Plausibility warnings.
		if (practice) {
			const b = acreageBounds(practice.code);
			const acres = rec[practice.credited_basis] as number | null;
			if (b && acres !== null && (acres < b.low || acres > b.high))
				this.err(
					practice.credited_basis,
					'acres-implausible',
					`${q(practice.credited_basis)} is ${acres} acres, ${acres < b.low ? 'unusually small' : 'unusually large'} for practice ${practice.code} (we flag values outside ${b.low}–${b.high} acres for review). Check the number and the unit.`,
					{ rule: 'plausible-range', low: b.low, high: b.high, basis: b.basis },
					'warning'
				);
		}
		if (countyOk && county !== null && lat !== null && lon !== null) {
			const shape = this.shapeById.get(county);
			if (shape && !geoContains(shape, [lon, lat]))
				this.err(
					'latitude',
					'point-outside-county',
					`The latitude/longitude point is not inside county ${county}${shape.properties?.name ? ` (${shape.properties.name})` : ''}. Check the coordinates (latitude first, longitude negative in the western hemisphere) and the county.`,
					{ rule: 'point-in-county', county_fips: county },
					'warning'
				);
		}
	}

	protected finish(rec: Record<string, unknown>, findings: Finding[]): RowResult {
		const ctx = this.ctx;
		const rowNo = this.rowNo;
		const record = rec as PracticeRecordV1;
		if (ctx.designChecks) {
			let designError = false;
			for (const f of ctx.designChecks(record)) {
				const col = f.column && isPracticeRecordColumn(f.column) ? f.column : null;
				const number = f.column_number ?? (col ? this.columnNumber(col) : null);
				if (f.severity === 'error') designError = true;
				findings.push({
					...f,
					row: f.row ?? rowNo,
					column_number: number,
					cell: f.cell ?? (this.headerMode && number !== null ? cellRef(number, f.row ?? rowNo) : null),
					value: col && COLUMN_INFO[col].personal && f.value !== null ? REDACTED : f.value
				});
			}
			if (designError) return { record: null, findings };
		}
		return { record, findings };
	}

	private future(col: 'installed_on' | 'withdrawn_on', d: string): void {
		this.err(
			col,
			'date-in-future',
			`${q(col)} is ${d}, which is in the future (today is ${this.ctx.today}). Send a practice once it is installed.`,
			{
				rule: 'not-after',
				date: this.ctx.today
			}
		);
	}
}

export function createRecordChecker(ctx: CheckContext): RecordChecker {
	return new Checker(ctx);
}

// --- summaries ------------------------------------------------------------------------------------

export interface FindingSummary {
	total: number;
	errors: number;
	warnings: number;
	/** File-level findings (row null) among the total. */
	file_level: number;
	/** Counts by code, split by severity (a code may be an error in one column and a warning in another). */
	by_code: Record<string, { error: number; warning: number }>;
}

/** A running tally, for streams too long to keep every finding. */
export function createFindingTally() {
	const s: FindingSummary = { total: 0, errors: 0, warnings: 0, file_level: 0, by_code: {} };
	return {
		add(f: Finding) {
			s.total++;
			if (f.severity === 'error') s.errors++;
			else s.warnings++;
			if (f.row === null) s.file_level++;
			const c = (s.by_code[f.code] ??= { error: 0, warning: 0 });
			c[f.severity]++;
		},
		summary(): FindingSummary {
			return {
				...s,
				by_code: Object.fromEntries(
					Object.entries(s.by_code)
						.sort(([a], [b]) => a.localeCompare(b))
						.map(([k, v]) => [k, { ...v }])
				)
			};
		}
	};
}

/** Counts findings by code and severity. */
export function summarise(findings: Iterable<Finding>): FindingSummary {
	const t = createFindingTally();
	for (const f of findings) t.add(f);
	return t.summary();
}
