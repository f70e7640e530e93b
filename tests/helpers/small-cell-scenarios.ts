// Random small-cell scenarios (fast-check) shared by the rollup and release tests: k, and a handful of
// practice records spread over five district counties, two state FYs, two practices and a few
// operations. `layOut` turns one into the records to write per district and the ground truth — the
// distinct operations in each county × FY × practice cell.
import fc from 'fast-check';
import type { Kysely } from 'kysely';
import type { Database } from '$lib/server/db/schema';
import type { TestRecord } from './rollup-fixtures';

export const scenario = fc.record({
	k: fc.integer({ min: 2, max: 5 }),
	records: fc.array(
		fc.record({
			where: fc.nat({ max: 4 }),
			practice_code: fc.constantFrom('605', '340'),
			fyOffset: fc.integer({ min: 0, max: 1 }),
			operation: fc.constantFrom('o1', 'o2', 'o3', 'o4', 'o5', 'o6', null),
			acres: fc.integer({ min: 1, max: 200 })
		}),
		{ minLength: 1, maxLength: 40 }
	)
});

export type ScenarioRecord = (typeof scenario extends fc.Arbitrary<infer T> ? T : never)['records'][number];

export interface Laid {
	/** `county|fy|practice` → the distinct operations (`districtId:operation`) in that cell. */
	truth: Map<string, Set<string>>;
	/** district id → its records, and each record's operation (`districtId:operation`), in the same order. */
	byDistrict: Map<number, { list: TestRecord[]; ops: string[] }>;
}

/**
 * A scenario's records placed: `where` picks one of the five `places` (district, county), `fy0 + fyOffset`
 * the state FY (installed on 15 September of the year before: the state FY starts in July), and local ids
 * are `${idPrefix}-${index}`.
 */
export function layOut(
	records: ScenarioRecord[],
	places: ReadonlyArray<{ id: number; county: string }>,
	fy0: number,
	idPrefix: string
): Laid {
	const truth = new Map<string, Set<string>>();
	const byDistrict = new Map<number, { list: TestRecord[]; ops: string[] }>();
	records.forEach((r, i) => {
		const { id, county } = places[r.where];
		const fy = fy0 + r.fyOffset;
		const op = `${id}:${r.operation ?? ''}`;
		const key = `${county}|${fy}|${r.practice_code}`;
		if (!truth.has(key)) truth.set(key, new Set());
		truth.get(key)!.add(op);
		const entry = byDistrict.get(id) ?? { list: [], ops: [] };
		entry.list.push({
			local_id: `${idPrefix}-${i}`,
			practice_code: r.practice_code,
			county_fips: county,
			installed_on: `${fy - 1}-09-15`,
			extent_acres: r.practice_code === '340' ? r.acres : null,
			drainage_area_acres: r.practice_code === '605' ? r.acres : null,
			operation_id: r.operation
		});
		entry.ops.push(op);
		byDistrict.set(id, entry);
	});
	return { truth, byDistrict };
}

/** The `small_cell_k` setting: read (to restore later), set, and restore (deleted if it was not set). */
export async function readSmallCellK(db: Kysely<Database>): Promise<unknown> {
	return (await db.selectFrom('settings').select('value').where('key', '=', 'small_cell_k').executeTakeFirst())?.value;
}

export async function setSmallCellK(db: Kysely<Database>, k: number): Promise<void> {
	await db
		.insertInto('settings')
		.values({ key: 'small_cell_k', value: JSON.stringify(k) })
		.onConflict((oc) => oc.column('key').doUpdateSet({ value: JSON.stringify(k) }))
		.execute();
}

export async function restoreSmallCellK(db: Kysely<Database>, saved: unknown): Promise<void> {
	if (saved === undefined) await db.deleteFrom('settings').where('key', '=', 'small_cell_k').execute();
	else
		await db
			.updateTable('settings')
			.set({ value: JSON.stringify(saved) })
			.where('key', '=', 'small_cell_k')
			.execute();
}
