// A record's estimates for the record API and page: the stored estimate under every method version
// computed so far (the numbers the rollups sum), how the active method's one is made (baseline,
// efficiencies, stacking on the field — from the same domain code that produced the stored number), and
// for bioreactors with design fields, the design screening under the active method.
import type { Kysely, Transaction } from 'kysely';
import { hasScreeningData, screenBioreactor, BIOREACTOR_CODE, type BioreactorFields } from '$lib/domain/bioreactor-screening';
import { estimateGroup } from '$lib/domain/rollup-facts';
import type { BioreactorScreening, EstimateBreakdown, StoredEstimate } from '$lib/schema/record-api';
import type { Database } from '../db/schema';
import { activeMethodVersion, loadMethod } from '../rollups/method-source';
import { loadFactRecords } from '../rollups/refresh';

type Db = Kysely<Database> | Transaction<Database>;

export interface RecordEstimates {
	estimates: StoredEstimate[];
	estimate: EstimateBreakdown | null;
	screening: BioreactorScreening | null;
}

const num = (v: string | number) => Number(v);

/** Share of the field's combined reduction credited to the record (means); 1 alone, null when nothing counts. */
function share(credited: number, combined: number | null, counted: boolean): number | null {
	if (!counted) return null;
	if (combined === null) return credited > 0 ? 1 : null;
	return combined > 0 ? credited / combined : null;
}

export async function recordEstimates(
	db: Db,
	recordId: string,
	practiceCode: string,
	data: Record<string, unknown>
): Promise<RecordEstimates> {
	const active = await activeMethodVersion(db);
	const rows = await db
		.selectFrom('record_estimates as e')
		.leftJoin('rollup_refresh as s', 's.method_version', 'e.method_version')
		.select([
			'e.method_version',
			'e.counted',
			'e.reason',
			'e.credited_acres',
			'e.n_lb_mean',
			'e.n_lb_low',
			'e.n_lb_high',
			'e.p_lb_mean',
			'e.p_lb_low',
			'e.p_lb_high',
			'e.computed_at',
			's.status'
		])
		.where('e.record_id', '=', recordId)
		.orderBy('e.computed_at', 'desc')
		.execute();
	const estimates: StoredEstimate[] = rows
		.map((r) => ({
			method_version: r.method_version,
			active: r.method_version === active,
			// The active method is refreshed in every write transaction; another one only by a rebuild.
			current: r.method_version === active ? r.status !== 'pending' && r.status !== 'failed' : r.status === 'ready',
			counted: r.counted,
			reason: r.reason,
			credited_acres: num(r.credited_acres),
			n_lb: { mean: num(r.n_lb_mean), low: num(r.n_lb_low), high: num(r.n_lb_high) },
			p_lb: { mean: num(r.p_lb_mean), low: num(r.p_lb_low), high: num(r.p_lb_high) },
			computed_at: new Date(r.computed_at).toISOString()
		}))
		.sort((a, b) => Number(b.active) - Number(a.active));

	const method = active ? await loadMethod(db, active) : null;
	let estimate: EstimateBreakdown | null = null;
	if (method && rows.some((r) => r.method_version === method.version)) {
		// The record and its field-mates, estimated together as the stored estimates were.
		const group = await loadFactRecords(db, [recordId], method.version);
		const mine = group.find((r) => String(r.id) === recordId);
		if (mine) {
			const fieldGroup = group.filter(
				(r) => r === mine || (mine.field_id && r.district_id === mine.district_id && r.field_id === mine.field_id)
			);
			const e = estimateGroup(fieldGroup, method).get(mine);
			if (e) {
				const combined = e.field_combined;
				estimate = {
					...e,
					stacking_share: {
						n: share(e.credited_efficiency.n.mean, combined ? combined.n.mean : null, e.counted),
						p: share(e.credited_efficiency.p.mean, combined ? combined.p.mean : null, e.counted)
					}
				};
			}
		}
	}

	let screening: BioreactorScreening | null = null;
	const fields = { ...(data as BioreactorFields), practice_code: practiceCode };
	if (method && practiceCode === BIOREACTOR_CODE && hasScreeningData(fields)) screening = screenBioreactor(fields, method);

	return { estimates, estimate, screening };
}
