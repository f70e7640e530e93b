// Settings the rollups read (table `settings`, JSON values): the state FY start month, the small-cell k
// and the state goal shown on the dashboard. Defaults apply when a key is missing.
import type { Kysely, Transaction } from 'kysely';
import type { Database } from '../db/schema';
import { DEFAULT_STATE_FY_START_MONTH } from '$lib/domain/fiscal-year';
import { DEFAULT_K } from '$lib/domain/small-cell-rule';

type Db = Kysely<Database> | Transaction<Database>;

export const SETTING_KEYS = {
	stateFyStartMonth: 'state_fy_start_month',
	smallCellK: 'small_cell_k',
	stateGoal: 'state_goal',
	hubStateFips: 'hub_state_fips'
} as const;

/** Largest k the small-cell rule accepts from settings (a typo must not wipe out every cell). */
export const MAX_K = 20;

export interface StateGoal {
	/** Target nitrogen reduction, lb N per year. */
	n_lb_per_yr: number;
	/** Where the number comes from, shown beside it (e.g. "Demo value, invented for the demo scenario"). */
	label: string;
	/** True when the value is invented for the demo scenario, not a published target. */
	demo: boolean;
}

export async function readSettings(db: Db, keys: readonly string[]): Promise<Map<string, unknown>> {
	const rows = await db
		.selectFrom('settings')
		.select(['key', 'value'])
		.where('key', 'in', [...keys])
		.execute();
	return new Map(rows.map((r) => [r.key, r.value]));
}

export function stateFyStartMonthOf(v: unknown): number {
	const n = typeof v === 'string' ? Number(v) : v;
	return typeof n === 'number' && Number.isInteger(n) && n >= 1 && n <= 12 ? n : DEFAULT_STATE_FY_START_MONTH;
}

export function smallCellKOf(v: unknown): number {
	const n = typeof v === 'string' ? Number(v) : v;
	return typeof n === 'number' && Number.isInteger(n) && n >= 1 && n <= MAX_K ? n : DEFAULT_K;
}

export function stateGoalOf(v: unknown): StateGoal | null {
	if (!v || typeof v !== 'object') return null;
	const o = v as Record<string, unknown>;
	const n = Number(o.n_lb_per_yr);
	if (!Number.isFinite(n) || n <= 0) return null;
	return { n_lb_per_yr: n, label: typeof o.label === 'string' ? o.label : 'State goal', demo: o.demo === true };
}

export async function stateFyStartMonth(db: Db): Promise<number> {
	const s = await readSettings(db, [SETTING_KEYS.stateFyStartMonth]);
	return stateFyStartMonthOf(s.get(SETTING_KEYS.stateFyStartMonth));
}
