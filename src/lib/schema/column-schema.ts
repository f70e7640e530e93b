// What every column schema (the practice record, the practice event) builds the same way, parameterised
// by the schema: column metadata written into zod's registry and read back, the input schema (optional
// columns may be omitted), the published JSON Schema, and the data dictionary in plain words. Each
// schema module supplies only what is its own (extra metadata, required-when rules, rule wording).
// Pure: runs in the browser, on the server and in the CLI (relative imports only).
import { z } from 'zod';

/** How a cell is read: text as is, codes as text (numbers allowed), numbers, dates, list values. */
export type ColumnKind = 'text' | 'code' | 'enum' | 'date' | 'number' | 'integer';

/** The metadata every column has, whatever its schema. */
export interface BaseColumnInfo<G extends string = string, Q extends string = string> {
	name: string;
	title: string;
	description: string;
	group: G;
	kind: ColumnKind;
	requirement: Q;
	unit: string | null;
	example: string | number;
	/** Plain-language format rule shown in the dictionary and template notes, e.g. "5 digits". */
	hint: string | null;
}

export type BaseMeta<G extends string, Q extends string> = Omit<BaseColumnInfo<G, Q>, 'name' | 'hint' | 'unit'> & {
	unit?: string;
	hint?: string;
};

/**
 * Puts a column's metadata into zod's registry with `.meta()`; `x-` keys survive into JSON Schema and
 * OpenAPI. `extra`: the schema's own `x-` keys, written after the common ones.
 */
export function withColumnMeta<T extends z.ZodType>(schema: T, m: BaseMeta<string, string>, extra: Record<string, unknown>): T {
	return schema.meta({
		title: m.title,
		description: m.description,
		examples: [m.example],
		'x-group': m.group,
		'x-kind': m.kind,
		'x-requirement': m.requirement,
		...(m.unit ? { 'x-unit': m.unit } : {}),
		...(m.hint ? { 'x-hint': m.hint } : {}),
		...extra
	}) as T;
}

/** The common metadata of a column, read back from its schema's `.meta()`. */
export function readColumnMeta<G extends string, Q extends string>(
	name: string,
	schema: z.ZodType
): BaseColumnInfo<G, Q> & { meta: Record<string, unknown> } {
	const m = (schema.meta() ?? {}) as Record<string, unknown>;
	return {
		name,
		title: String(m.title),
		description: String(m.description),
		group: m['x-group'] as G,
		kind: m['x-kind'] as ColumnKind,
		requirement: m['x-requirement'] as Q,
		unit: (m['x-unit'] as string | undefined) ?? null,
		example: (m.examples as Array<string | number>)[0],
		hint: (m['x-hint'] as string | undefined) ?? null,
		meta: m
	};
}

/** The mask that makes every column but the required ones optional (what a client may omit). */
export function optionalColumnsMask<C extends string>(columns: readonly C[], required: readonly C[]): { [K in C]?: true } {
	return Object.fromEntries(columns.filter((c) => !required.includes(c)).map((c) => [c, true])) as { [K in C]?: true };
}

type JsonObject = Record<string, unknown>;

/** The published JSON Schema (draft 2020-12) of one document as sent, with the rules zod cannot state. */
export function publishedJsonSchema(
	input: z.ZodType,
	id: string,
	version: string,
	allOf: JsonObject[],
	furtherChecks: readonly string[]
): JsonObject {
	const generated = z.toJSONSchema(input, { target: 'draft-2020-12' }) as JsonObject;
	const { $schema, ...rest } = generated;
	return { $schema, $id: id, version, ...rest, allOf, 'x-further-checks': furtherChecks };
}

/** The JSON Schema of one column (its constraints, before null is allowed). */
export function columnJsonSchemaOf(schema: z.ZodType): JsonObject {
	const s = z.toJSONSchema(schema, { target: 'draft-2020-12' }) as JsonObject;
	const anyOf = s.anyOf as JsonObject[] | undefined;
	return { ...(anyOf ? (anyOf.find((x) => x.type !== 'null') ?? {}) : s) };
}

// --- the data dictionary --------------------------------------------------------------------------

export type DictionaryColumnOf<I extends BaseColumnInfo> = I & {
	/** 1-based position in the template. */
	position: number;
	/** When a value is required, in words. */
	required: string;
	/** The value's type in words: text, whole number, number, date, code. */
	type: string;
	/** Each rule the value must meet, in words. */
	rules: string[];
};

export interface DictionaryGroupOf<G extends string, I extends BaseColumnInfo> {
	id: G;
	title: string;
	columns: Array<DictionaryColumnOf<I>>;
}

export interface DictionarySpec<C extends string, G extends string, I extends BaseColumnInfo<G>> {
	columns: readonly C[];
	info: Readonly<Record<C, I>>;
	groups: Readonly<Record<G, string>>;
	jsonSchema: (col: C) => JsonObject;
	/** When a value is required, in words. */
	requiredText: (info: I) => string;
	/** The rule in words for a number column's form. */
	numberForm: string;
	/** The schema's own last rules of a column (e.g. the practices it applies to). */
	extraRules: (info: I) => string[];
	/** The schema's own last lines of a column's note (e.g. privacy). */
	extraNote: (d: DictionaryColumnOf<I>) => string | null;
}

const fmt = (n: number) => n.toLocaleString('en-US', { maximumFractionDigits: 6 });

const TYPES: Record<ColumnKind, string> = {
	integer: 'whole number',
	number: 'number',
	date: 'date (YYYY-MM-DD)',
	code: 'code (digits, as text)',
	enum: 'one value from a list',
	text: 'text'
};

/** The data dictionary of a schema: rules, columns, groups and notes, in plain words. */
export function makeDictionary<C extends string, G extends string, I extends BaseColumnInfo<G>>(spec: DictionarySpec<C, G, I>) {
	/** The constraints of a column in words, read from its JSON Schema. */
	function columnRules(col: C): string[] {
		const s = spec.jsonSchema(col);
		const info = spec.info[col];
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
		if (s.multipleOf === 0.25) out.push('in quarter inches at most (e.g. 36.25)');
		if (typeof s.maxLength === 'number') out.push(`at most ${fmt(s.maxLength)} characters`);
		if (Array.isArray(s.enum)) {
			const values = s.enum as string[];
			out.push(values.length > 6 ? `one of the ${values.length} codes in the practice list` : `one of: ${values.join(', ')}`);
		}
		if (s.format === 'date') out.push('a real calendar date written YYYY-MM-DD');
		else if (typeof s.pattern === 'string' && info.hint) out.push(info.hint);
		if (info.kind === 'number') out.push(spec.numberForm);
		if (info.kind === 'integer') out.push('digits only (no commas or units)');
		out.push(...spec.extraRules(info));
		return out;
	}

	function dictionaryColumn(col: C): DictionaryColumnOf<I> {
		const info = spec.info[col];
		return {
			...info,
			position: spec.columns.indexOf(col) + 1,
			required: spec.requiredText(info),
			type: TYPES[info.kind] ?? 'text',
			rules: columnRules(col)
		};
	}

	/** Every column, grouped as on the /schema page. */
	function dataDictionary(): Array<DictionaryGroupOf<G, I>> {
		return (Object.keys(spec.groups) as G[]).map((id) => ({
			id,
			title: spec.groups[id],
			columns: spec.columns.filter((c) => spec.info[c].group === id).map(dictionaryColumn)
		}));
	}

	/** A one-cell summary of a column for a spreadsheet note. */
	function columnNote(col: C): string {
		const d = dictionaryColumn(col);
		return [
			`${d.title} — ${d.required.toLowerCase()}.`,
			d.description,
			d.unit ? `Unit: ${d.unit}.` : null,
			d.rules.length ? `Rules: ${d.rules.join('; ')}.` : null,
			`Example: ${d.example}`,
			spec.extraNote(d)
		]
			.filter(Boolean)
			.join('\n');
	}

	return { columnRules, dictionaryColumn, dataDictionary, columnNote };
}
