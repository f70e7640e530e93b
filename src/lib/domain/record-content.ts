// The canonical content of a practice record and the differences between two versions. Pure.
// Two rows that mean the same record give the same canonical JSON (keys sorted, empty values dropped,
// numbers in their shortest form), so a re-sent unchanged row is recognised by its content hash.

export type RecordData = Record<string, unknown>;

function isEmpty(v: unknown): boolean {
	return v === null || v === undefined || (typeof v === 'string' && v.trim() === '');
}

/** A plain object with sorted keys and no empty members (null, undefined, blank strings). */
export function canonicalData(record: RecordData): RecordData {
	const out: RecordData = {};
	for (const key of Object.keys(record).sort()) {
		const v = record[key];
		if (isEmpty(v)) continue;
		if (typeof v === 'number') {
			if (!Number.isFinite(v)) throw new Error(`canonicalData: ${key} is not a finite number`);
			out[key] = Object.is(v, -0) ? 0 : v;
		} else if (v instanceof Date) out[key] = v.toISOString();
		else if (typeof v === 'object') out[key] = canonicalData(v as RecordData);
		else out[key] = v;
	}
	return out;
}

/** Deterministic JSON of canonical data (what the content hash is computed from). */
export function canonicalJson(record: RecordData): string {
	return JSON.stringify(canonicalData(record));
}

function same(a: unknown, b: unknown): boolean {
	if (a === b) return true;
	if (typeof a === 'object' && a !== null && typeof b === 'object' && b !== null) return JSON.stringify(a) === JSON.stringify(b);
	return false;
}

/** Names of the fields whose value differs between two versions (added, removed or changed), sorted. */
export function changedFields(before: RecordData | null, after: RecordData): string[] {
	const a = before ? canonicalData(before) : {};
	const b = canonicalData(after);
	const keys = new Set([...Object.keys(a), ...Object.keys(b)]);
	return [...keys].filter((k) => !same(a[k], b[k])).sort();
}

export interface FieldChange {
	field: string;
	before: unknown;
	after: unknown;
}

/** Field-by-field differences for the record page's version history. */
export function diffVersions(before: RecordData | null, after: RecordData): FieldChange[] {
	const a = before ? canonicalData(before) : {};
	const b = canonicalData(after);
	return changedFields(a, b).map((field) => ({ field, before: a[field] ?? null, after: b[field] ?? null }));
}
