// Estimated reduction of a practice record under one reduction method (product brief, "Estimated
// reduction"; rollups issue, "Estimate per record"):
//
//   lb/yr = credited acres × baseline loss (lb/ac/yr; county override, else statewide) × efficiency
//
// with low/high from mean ∓ one published SD, clipped to [0, 1]. Credited acres are `extent_acres` for
// in-field practices and `drainage_area_acres` for edge-of-field ones (the method's `credited_basis`).
// Practices stacked on the same field (same district and `field_id`) combine as E = 1 − Π(1 − eᵢ), never
// summed; E is shared among them in proportion to each one's own mean efficiency (share_i = E · eᵢ / Σe), for
// N and P. The low and the high combine the practices' low (high) efficiencies the same way and share that
// E in the same proportions as the mean, so each record keeps low ≤ mean ≤ high (shares taken from each
// scenario's own efficiencies could cross: a practice stacked with one whose low is 0 would take the whole
// low E). Only when no counted practice has a mean efficiency do a scenario's own efficiencies weigh.
// Withdrawn records stop counting.
import { inServiceDuring, withdrawal } from './in-service';
import { baselineFor, practiceMethod, type EfficiencyValue, type Nutrient, type ReductionMethod } from './reduction-method';
import type { CreditedBasis } from './practice-catalog';

export interface EstimateInput {
	id: string | number;
	practice_code: string;
	county_fips: string;
	district_id?: string | number | null;
	field_id?: string | null;
	installed_on?: string | null;
	status?: string | null;
	withdrawn_on?: string | null;
	/** numeric columns arrive as strings from PostgreSQL; both forms are accepted. */
	extent_acres?: number | string | null;
	drainage_area_acres?: number | string | null;
}

export interface Range {
	mean: number;
	low: number;
	high: number;
}

export type NotCountedReason = 'withdrawn' | 'not-in-service' | 'practice-not-in-method' | 'no-credited-acres';

export interface RecordEstimate {
	record_id: string;
	method_version: string;
	practice_code: string;
	counted: boolean;
	/** Why a record adds nothing; null when counted. */
	reason: NotCountedReason | null;
	credited_basis: CreditedBasis | null;
	credited_acres: number;
	baseline: { n_lb_per_ac_yr: number; p_lb_per_ac_yr: number; source: 'county' | 'statewide' };
	/** The practice's own efficiency under the method (fractions). */
	efficiency: { n: Range; p: Range };
	/** The efficiency credited after stacking (its share of the field's combined reduction). */
	credited_efficiency: { n: Range; p: Range };
	/** Estimated reduction, lb per year. */
	n_lb: Range;
	p_lb: Range;
	/** Other counted records on the same field; empty when the practice stands alone. */
	stacked_with: string[];
	/** The field's combined efficiency when stacked (1 − Π(1 − eᵢ)); null when alone. */
	field_combined: { n: Range; p: Range } | null;
}

export interface EstimateOptions {
	/**
	 * Count only records in service at some time in this inclusive period (e.g. one fiscal year's first and
	 * last day): stacking then combines only the practices that were on the field together. Without it,
	 * only withdrawal decides (every withdrawn record stops counting).
	 */
	period?: { first: string; last: string };
}

const ZERO: Range = { mean: 0, low: 0, high: 0 };
const clip01 = (x: number) => Math.min(1, Math.max(0, x));

/** A parsed non-negative finite number, or null. */
export function toAcres(v: number | string | null | undefined): number | null {
	if (v === null || v === undefined || v === '') return null;
	const n = typeof v === 'number' ? v : Number(v);
	return Number.isFinite(n) && n >= 0 ? n : null;
}

/** Mean, and mean ∓ SD clipped to [0, 1]; a value without a published spread has low = high = mean. */
export function efficiencyRange(e: EfficiencyValue | null | undefined): Range {
	if (!e) return ZERO;
	const mean = clip01(e.mean);
	if (e.sd === null) return { mean, low: mean, high: mean };
	return { mean, low: clip01(e.mean - e.sd), high: clip01(e.mean + e.sd) };
}

/** 1 − Π(1 − eᵢ) for efficiencies in [0, 1]. */
export function combineEfficiencies(effs: readonly number[]): number {
	let remaining = 1;
	for (const e of effs) remaining *= 1 - clip01(e);
	return 1 - remaining;
}

/**
 * Shares of the combined efficiency of `effs`, in proportion to `weights` (by default the efficiencies
 * themselves; weights that sum to 0 fall back to them); they sum to the combined value.
 */
export function apportion(effs: readonly number[], weights: readonly number[] = effs): number[] {
	const combined = combineEfficiencies(effs);
	let w = weights.map(clip01);
	if (w.reduce((a, e) => a + e, 0) === 0) w = effs.map(clip01);
	const sum = w.reduce((a, e) => a + e, 0);
	if (sum === 0) return effs.map(() => 0);
	return w.map((e) => (combined * e) / sum);
}

function isWithdrawn(r: EstimateInput): boolean {
	return withdrawal(r).withdrawn;
}

function stackKey(r: EstimateInput): string | null {
	if (r.field_id === null || r.field_id === undefined || r.field_id === '') return null;
	return JSON.stringify([r.district_id ?? null, r.field_id]);
}

/** Splits records into field groups: one group per (district, field_id); records without a field stand alone. */
export function groupByField<T extends EstimateInput>(records: readonly T[]): T[][] {
	const groups = new Map<string, T[]>();
	const out: T[][] = [];
	for (const r of records) {
		const k = stackKey(r);
		if (k === null) {
			out.push([r]);
			continue;
		}
		let g = groups.get(k);
		if (!g) {
			g = [];
			groups.set(k, g);
			out.push(g);
		}
		g.push(r);
	}
	return out;
}

/**
 * Estimates every record of ONE field group (records sharing district and `field_id`; the caller groups,
 * e.g. with `groupByField`). Returns one result per input record, in input order.
 */
export function estimateFieldGroup(
	records: readonly EstimateInput[],
	method: ReductionMethod,
	opts: EstimateOptions = {}
): RecordEstimate[] {
	const prepared = records.map((r) => {
		const pm = practiceMethod(method, r.practice_code);
		const b = baselineFor(method, r.county_fips);
		const acresRaw = pm ? toAcres(pm.credited_basis === 'extent_acres' ? r.extent_acres : r.drainage_area_acres) : null;
		let reason: NotCountedReason | null = null;
		if (!pm) reason = 'practice-not-in-method';
		else if (opts.period) {
			const installed = r.installed_on;
			if (!installed || !inServiceDuring({ ...r, installed_on: installed }, pm.lifespan_years, opts.period.first, opts.period.last)) {
				const w = withdrawal(r);
				reason = w.withdrawn && (w.on === null || w.on < opts.period.first) ? 'withdrawn' : 'not-in-service';
			}
		} else if (isWithdrawn(r)) reason = 'withdrawn';
		if (!reason && (acresRaw === null || acresRaw === 0)) reason = 'no-credited-acres';
		const eff = { n: efficiencyRange(pm?.n), p: efficiencyRange(pm?.p) };
		return { r, pm, b, acres: acresRaw ?? 0, reason, eff };
	});

	const counted = prepared.filter((x) => x.reason === null);
	const shares = new Map<(typeof prepared)[number], { n: Range; p: Range }>();
	const combined: { n: Range; p: Range } = { n: { ...ZERO }, p: { ...ZERO } };
	for (const k of ['n', 'p'] as Nutrient[]) {
		const means = counted.map((x) => x.eff[k].mean);
		for (const part of ['mean', 'low', 'high'] as const) {
			const effs = counted.map((x) => x.eff[k][part]);
			const s = apportion(effs, means);
			combined[k][part] = combineEfficiencies(effs);
			counted.forEach((x, i) => {
				let entry = shares.get(x);
				if (!entry) {
					entry = { n: { ...ZERO }, p: { ...ZERO } };
					shares.set(x, entry);
				}
				entry[k][part] = s[i];
			});
		}
	}
	const stacked = counted.length > 1;

	return prepared.map((x) => {
		const share = shares.get(x) ?? { n: ZERO, p: ZERO };
		const lb = (k: Nutrient): Range => {
			if (x.reason) return { ...ZERO };
			const base = k === 'n' ? x.b.n_lb_per_ac_yr : x.b.p_lb_per_ac_yr;
			return { mean: x.acres * base * share[k].mean, low: x.acres * base * share[k].low, high: x.acres * base * share[k].high };
		};
		const id = String(x.r.id);
		return {
			record_id: id,
			method_version: method.version,
			practice_code: x.r.practice_code,
			counted: x.reason === null,
			reason: x.reason,
			credited_basis: x.pm?.credited_basis ?? null,
			credited_acres: x.reason === 'practice-not-in-method' ? 0 : x.acres,
			baseline: { n_lb_per_ac_yr: x.b.n_lb_per_ac_yr, p_lb_per_ac_yr: x.b.p_lb_per_ac_yr, source: x.b.source },
			efficiency: x.eff,
			credited_efficiency: x.reason ? { n: { ...ZERO }, p: { ...ZERO } } : { n: { ...share.n }, p: { ...share.p } },
			n_lb: lb('n'),
			p_lb: lb('p'),
			stacked_with: x.reason === null && stacked ? counted.filter((o) => o !== x).map((o) => String(o.r.id)) : [],
			field_combined: x.reason === null && stacked ? { n: { ...combined.n }, p: { ...combined.p } } : null
		};
	});
}

/** The single-record form: a practice alone on its field. */
export function estimateRecord(record: EstimateInput, method: ReductionMethod, opts: EstimateOptions = {}): RecordEstimate {
	return estimateFieldGroup([record], method, opts)[0];
}

/** Estimates any set of records: groups them by field, then returns results in input order. */
export function estimateRecords(records: readonly EstimateInput[], method: ReductionMethod, opts: EstimateOptions = {}): RecordEstimate[] {
	const byRecord = new Map<EstimateInput, RecordEstimate>();
	for (const g of groupByField(records)) {
		const res = estimateFieldGroup(g, method, opts);
		g.forEach((r, i) => byRecord.set(r, res[i]));
	}
	return records.map((r) => byRecord.get(r)!);
}

/** Sums lb ranges (e.g. a rollup cell); low/high sum like the mean. */
export function sumRanges(rs: readonly Range[]): Range {
	return rs.reduce((a, r) => ({ mean: a.mean + r.mean, low: a.low + r.low, high: a.high + r.high }), { ...ZERO });
}
