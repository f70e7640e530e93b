// What one practice record contributes to the rollups under one reduction method: its estimate
// (lb/yr, the same in every fiscal year it counts in) and its footprint — the district, county,
// HUC-8, practice and operation it is counted under, its costs, and the fiscal years it counts in
// on the `installed` and `in_service` bases, on both the state and the federal FY.
//
// Withdrawn records: on the in-service basis a withdrawn record still counts in the FYs before its
// withdrawal (in-service rule), so its stored estimate is what it was credited while in service —
// computed alongside the practices still on its field. Records still in service stack only with each
// other: a withdrawn practice no longer takes a share of its field's combined reduction.
//
// Estimates do not depend on the FY (a simplification the Notes of every export state): the practices
// stacked on a field are combined over the record's whole life, not year by year.
import { estimateFieldGroup, groupByField, type EstimateInput, type RecordEstimate } from './estimate';
import { fiscalYear, type FyBasis } from './fiscal-year';
import { fiscalYearSpan, withdrawal } from './in-service';
import { practiceMethod, type ReductionMethod } from './reduction-method';

export interface FactRecord extends EstimateInput {
	id: string;
	district_id: number;
	installed_on: string;
	status: string;
	withdrawn_on: string | null;
	operation_id: string | null;
	huc12: string | null;
	cost_total_usd: string | number | null;
	cost_share_usd: string | number | null;
	/** The practice catalog's lifespan, used when the method does not list the practice. */
	catalog_lifespan_years: number;
}

export interface FySpans {
	installed: number;
	/** Inclusive run of FYs on the in-service basis; null when the record never counts in service. */
	first: number | null;
	last: number | null;
}

export interface RecordFact {
	record_id: string;
	method_version: string;
	counted: boolean;
	reason: string | null;
	credited_acres: number;
	n_lb: { mean: number; low: number; high: number };
	p_lb: { mean: number; low: number; high: number };
	district_id: number;
	county_fips: string;
	huc8: string | null;
	practice_code: string;
	field_id: string | null;
	/** Distinct-operation key: the district's operation id, or '' when none was reported (all such records
	 * of a district count together as one operation — the cautious reading for the small-cell rule). */
	operation_key: string;
	cost_usd: number | null;
	cost_share_usd: number | null;
	state_fy_start_month: number;
	state: FySpans;
	federal: FySpans;
}

/** HUC-8 of a HUC-12: its first eight digits (the HUC hierarchy nests by digit pairs). */
export function huc8Of(huc12: string | null | undefined): string | null {
	const s = (huc12 ?? '').trim();
	return /^\d{12}$/.test(s) ? s.slice(0, 8) : null;
}

function money(v: string | number | null | undefined): number | null {
	if (v === null || v === undefined || v === '') return null;
	const n = typeof v === 'number' ? v : Number(v);
	return Number.isFinite(n) ? n : null;
}

/** Lifespan the in-service rule uses: the method's, else the practice catalog's. */
export function lifespanFor(method: ReductionMethod, r: FactRecord): number {
	return practiceMethod(method, r.practice_code)?.lifespan_years ?? r.catalog_lifespan_years;
}

export function fySpans(r: FactRecord, lifespanYears: number, fyBasis: FyBasis, startMonth: number): FySpans {
	const opts = { fyBasis, startMonth };
	const span = fiscalYearSpan(r, lifespanYears, 'in_service', opts);
	return { installed: fiscalYear(r.installed_on, fyBasis, startMonth), first: span?.from ?? null, last: span?.to ?? null };
}

/** Estimates one field group (records sharing district and field id), withdrawn records as described above. */
function estimateGroup(group: readonly FactRecord[], method: ReductionMethod): Map<FactRecord, RecordEstimate> {
	const out = new Map<FactRecord, RecordEstimate>();
	const active = group.filter((r) => !withdrawal(r).withdrawn);
	const activeResults = active.length > 0 ? estimateFieldGroup(active, method) : [];
	active.forEach((r, i) => out.set(r, activeResults[i]));
	for (const w of group) {
		if (!withdrawal(w).withdrawn) continue;
		const asInService: FactRecord = { ...w, status: 'installed', withdrawn_on: null };
		const res = estimateFieldGroup([...active, asInService], method);
		out.set(w, res[res.length - 1]);
	}
	return out;
}

/**
 * Facts of every record given. Field-mates must be passed together (every record sharing a district and
 * field id with one of them), since stacking changes each one's share.
 */
export function recordFacts(records: readonly FactRecord[], method: ReductionMethod, stateFyStartMonth: number): RecordFact[] {
	const estimates = new Map<FactRecord, RecordEstimate>();
	for (const g of groupByField(records)) for (const [r, e] of estimateGroup(g, method)) estimates.set(r, e);
	return records.map((r) => {
		const e = estimates.get(r)!;
		const life = lifespanFor(method, r);
		return {
			record_id: String(r.id),
			method_version: method.version,
			counted: e.counted,
			reason: e.reason,
			credited_acres: e.credited_acres,
			n_lb: { ...e.n_lb },
			p_lb: { ...e.p_lb },
			district_id: r.district_id,
			county_fips: r.county_fips,
			huc8: huc8Of(r.huc12),
			practice_code: r.practice_code,
			field_id: r.field_id ?? null,
			operation_key: (r.operation_id ?? '').trim(),
			cost_usd: money(r.cost_total_usd),
			cost_share_usd: money(r.cost_share_usd),
			state_fy_start_month: stateFyStartMonth,
			state: fySpans(r, life, 'state', stateFyStartMonth),
			federal: fySpans(r, life, 'federal', stateFyStartMonth)
		};
	});
}
