// Field verification sampling: which in-service practices the state visits in a fiscal year.
//
// - Stratified by district: each district's share is `percent` of its in-service practices, rounded up,
//   but at least `minPerDistrict` (or all of them when it has fewer).
// - Weighted: edge-of-field practices and practices never visited before are more likely to be drawn —
//   each practice's weight is the product of the factors that apply to it (1 otherwise).
// - Weighted sampling without replacement by Efraimidis & Spirakis, "Weighted random sampling with a
//   reservoir", Information Processing Letters 97(5), 2006 (algorithm A-Res): each item gets the key
//   u^(1/w) with u uniform in (0, 1), and the n largest keys are drawn. For n = 1 an item is drawn with
//   probability w / Σw exactly (the tests measure this).
// - Reproducible: each district has its own generator seeded by `${seed}:${district}`, and its practices
//   are taken in id order, so the same seed over the same population gives the same sample, and adding a
//   district leaves the others' samples as they were.
// Pure: no I/O; the server loads the population and stores the result.
import { seededRandom } from './seeded-random';

export interface SampleParams {
	/** Share of each district's in-service practices to visit, in percent (0 < percent ≤ 100). */
	percent: number;
	/** Visits per district at least (capped by the district's count of practices). */
	minPerDistrict: number;
	/** Weight factor of an edge-of-field practice (≥ 1). */
	edgeWeight: number;
	/** Weight factor of a practice never visited before (≥ 1). */
	neverVisitedWeight: number;
}

export const DEFAULT_SAMPLE_PARAMS: SampleParams = { percent: 5, minPerDistrict: 2, edgeWeight: 2, neverVisitedWeight: 2 };

export interface SampleCandidate {
	id: string;
	district: string;
	edgeOfField: boolean;
	neverVisited: boolean;
}

export interface SampleResult {
	/** Drawn ids, by district (ascending district key), each district's in draw order. */
	drawn: SampleCandidate[];
	perDistrict: Array<{ district: string; population: number; target: number; drawn: number }>;
}

export function checkSampleParams(p: SampleParams): string[] {
	const problems: string[] = [];
	if (!(Number.isFinite(p.percent) && p.percent > 0 && p.percent <= 100)) problems.push('percent must be more than 0 and at most 100');
	if (!(Number.isInteger(p.minPerDistrict) && p.minPerDistrict >= 0 && p.minPerDistrict <= 1000))
		problems.push('minPerDistrict must be a whole number from 0 to 1000');
	if (!(Number.isFinite(p.edgeWeight) && p.edgeWeight >= 1 && p.edgeWeight <= 100)) problems.push('edgeWeight must be from 1 to 100');
	if (!(Number.isFinite(p.neverVisitedWeight) && p.neverVisitedWeight >= 1 && p.neverVisitedWeight <= 100))
		problems.push('neverVisitedWeight must be from 1 to 100');
	return problems;
}

/** How many practices a district of `population` in-service practices gets visited. */
export function districtTarget(population: number, p: SampleParams): number {
	const share = Math.ceil((population * p.percent) / 100 - 1e-9);
	return Math.min(population, Math.max(p.minPerDistrict, share));
}

export function candidateWeight(c: SampleCandidate, p: SampleParams): number {
	return (c.edgeOfField ? p.edgeWeight : 1) * (c.neverVisited ? p.neverVisitedWeight : 1);
}

const byId = (a: SampleCandidate, b: SampleCandidate) =>
	a.id.length !== b.id.length ? a.id.length - b.id.length : a.id < b.id ? -1 : a.id > b.id ? 1 : 0;

export function drawSample(population: readonly SampleCandidate[], p: SampleParams, seed: string): SampleResult {
	const problems = checkSampleParams(p);
	if (problems.length > 0) throw new RangeError(problems.join('; '));
	if (seed.length === 0) throw new RangeError('a seed is required');
	const groups = new Map<string, SampleCandidate[]>();
	for (const c of population) {
		const g = groups.get(c.district);
		if (g) g.push(c);
		else groups.set(c.district, [c]);
	}
	const drawn: SampleCandidate[] = [];
	const perDistrict: SampleResult['perDistrict'] = [];
	for (const district of [...groups.keys()].sort()) {
		const items = [...groups.get(district)!].sort(byId);
		const target = districtTarget(items.length, p);
		const random = seededRandom(`${seed}:${district}`);
		// Key u^(1/w), compared through its logarithm ln(u)/w (same order, no underflow for big weights).
		const keyed = items.map((c) => {
			let u = random();
			while (u === 0) u = random();
			return { c, key: Math.log(u) / candidateWeight(c, p) };
		});
		keyed.sort((a, b) => b.key - a.key || byId(a.c, b.c));
		const chosen = keyed.slice(0, target).map((k) => k.c);
		drawn.push(...chosen);
		perDistrict.push({ district, population: items.length, target, drawn: chosen.length });
	}
	return { drawn, perDistrict };
}
