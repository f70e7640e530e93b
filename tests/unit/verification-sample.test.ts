import { describe, expect, it } from 'vitest';
import { hashSeed, newSeedText, seededRandom } from '$lib/domain/seeded-random';
import {
	DEFAULT_SAMPLE_PARAMS,
	checkSampleParams,
	districtTarget,
	drawSample,
	type SampleCandidate,
	type SampleParams
} from '$lib/domain/verification-sample';
import { statusAfterNewVersion, uniqueWarningKeys, warningKey } from '$lib/domain/review-state';

function population(): SampleCandidate[] {
	const out: SampleCandidate[] = [];
	let id = 1;
	const sizes: Record<string, number> = { AAA: 120, BBB: 35, CCC: 3, DDD: 1 };
	for (const [district, n] of Object.entries(sizes))
		for (let i = 0; i < n; i++) out.push({ id: String(id++), district, edgeOfField: i % 4 === 0, neverVisited: i % 3 !== 0 });
	return out;
}

const ids = (r: { drawn: SampleCandidate[] }) => r.drawn.map((c) => c.id);

describe('seeded random numbers', () => {
	it('the same seed gives the same sequence; another seed another one', () => {
		const a = seededRandom('alpha');
		const b = seededRandom('alpha');
		const c = seededRandom('alphb');
		const sa = Array.from({ length: 20 }, a);
		expect(Array.from({ length: 20 }, b)).toEqual(sa);
		expect(Array.from({ length: 20 }, c)).not.toEqual(sa);
		expect(hashSeed('x')).not.toEqual(hashSeed('y'));
	});

	it('is roughly uniform on [0, 1): chi-square over 20 bins stays under the 0.999 quantile', () => {
		const r = seededRandom('uniformity');
		const bins = new Array(20).fill(0);
		const n = 100_000;
		let outside = 0;
		for (let i = 0; i < n; i++) {
			const x = r();
			if (!(x >= 0 && x < 1)) outside++;
			else bins[Math.floor(x * 20)]++;
		}
		expect(outside).toBe(0);
		const e = n / 20;
		const chi2 = bins.reduce((s, o) => s + (o - e) ** 2 / e, 0);
		// χ² with 19 degrees of freedom: 0.999 quantile ≈ 43.82 (standard χ² table, e.g. NIST/SEMATECH
		// e-Handbook of Statistical Methods, 2012, section 1.3.6.7.4, "Critical values of the chi-square distribution").
		expect(chi2).toBeLessThan(43.82);
	});

	it('new seed texts are 16 hex digits', () => {
		expect(newSeedText()).toMatch(/^[0-9a-f]{16}$/);
	});
});

describe('drawSample', () => {
	const p: SampleParams = { percent: 10, minPerDistrict: 4, edgeWeight: 3, neverVisitedWeight: 2 };

	it('the same seed draws the same sample, also from a shuffled population', () => {
		const pop = population();
		const first = drawSample(pop, p, 'seed-2026');
		const again = drawSample([...pop].reverse(), p, 'seed-2026');
		expect(ids(again)).toEqual(ids(first));
		expect(first.drawn.length).toBeGreaterThan(0);
	});

	it('a different seed draws a different sample', () => {
		const pop = population();
		expect(ids(drawSample(pop, p, 'seed-2026'))).not.toEqual(ids(drawSample(pop, p, 'seed-2027')));
	});

	it('each district gets its percentage rounded up, at least the minimum, at most all it has', () => {
		const r = drawSample(population(), p, 'minimums');
		const got = Object.fromEntries(r.perDistrict.map((d) => [d.district, d.drawn]));
		// AAA: 10% of 120 = 12; BBB: 10% of 35 = 3.5 → 4, and min 4; CCC: 3 < min → all 3; DDD: 1.
		expect(got).toEqual({ AAA: 12, BBB: 4, CCC: 3, DDD: 1 });
		for (const d of ['AAA', 'BBB', 'CCC', 'DDD']) {
			const drawnHere = r.drawn.filter((c) => c.district === d);
			expect(new Set(drawnHere.map((c) => c.id)).size).toBe(drawnHere.length);
		}
		expect(districtTarget(200, { ...p, percent: 25 })).toBe(50);
		expect(districtTarget(0, p)).toBe(0);
	});

	it('per-district minimums hold for many seeds and parameter sets', () => {
		const pop = population();
		const sizes = new Map<string, number>();
		for (const c of pop) sizes.set(c.district, (sizes.get(c.district) ?? 0) + 1);
		for (let s = 0; s < 50; s++) {
			const params = { ...p, percent: 1 + (s % 30), minPerDistrict: s % 7 };
			const r = drawSample(pop, params, `m${s}`);
			for (const [d, n] of sizes) {
				const k = r.drawn.filter((c) => c.district === d).length;
				expect(k).toBeGreaterThanOrEqual(Math.min(n, params.minPerDistrict));
				expect(k).toBeGreaterThanOrEqual(Math.min(n, Math.ceil((n * params.percent) / 100)));
			}
		}
	});

	it('adding a district does not change the other districts’ samples', () => {
		const pop = population();
		const before = drawSample(pop, p, 'stable');
		const more = [
			...pop,
			...Array.from({ length: 10 }, (_, i) => ({ id: String(900 + i), district: 'BAA', edgeOfField: false, neverVisited: true }))
		];
		const after = drawSample(more, p, 'stable');
		expect(ids(after).filter((id) => Number(id) < 900)).toEqual(ids(before));
	});

	it('weighting is measurable: with one visit per district, an item is drawn with probability w / Σw', () => {
		// One edge-of-field practice (weight 3) among four in-field ones (weight 1): expected 3/7 ≈ 0.4286.
		const pop: SampleCandidate[] = [
			{ id: '1', district: 'X', edgeOfField: true, neverVisited: false },
			...[2, 3, 4, 5].map((i) => ({ id: String(i), district: 'X', edgeOfField: false, neverVisited: false }))
		];
		const params = { percent: 1, minPerDistrict: 1, edgeWeight: 3, neverVisitedWeight: 2 };
		const n = 20_000;
		let edge = 0;
		for (let s = 0; s < n; s++) if (drawSample(pop, params, `w${s}`).drawn[0].id === '1') edge++;
		const share = edge / n;
		// Binomial standard error at n = 20 000 is about 0.0035; 5 standard errors of slack.
		expect(Math.abs(share - 3 / 7)).toBeLessThan(0.018);
	});

	it('never-visited practices are drawn more often than visited ones, in proportion to the factor', () => {
		const pop: SampleCandidate[] = Array.from({ length: 40 }, (_, i) => ({
			id: String(i + 1),
			district: 'Y',
			edgeOfField: false,
			neverVisited: i < 20
		}));
		const params = { percent: 10, minPerDistrict: 0, edgeWeight: 1, neverVisitedWeight: 2 };
		let never = 0;
		let total = 0;
		for (let s = 0; s < 3000; s++)
			for (const c of drawSample(pop, params, `v${s}`).drawn) {
				total++;
				if (c.neverVisited) never++;
			}
		// 4 of 40 drawn without replacement: the never-visited half holds ≈ 2/3 of the draws (a bit less than
		// 2/3 because drawing without replacement flattens weights); certainly well above one half.
		expect(never / total).toBeGreaterThan(0.6);
		expect(never / total).toBeLessThan(0.7);
	});

	it('refuses bad parameters and an empty seed', () => {
		expect(checkSampleParams(DEFAULT_SAMPLE_PARAMS)).toEqual([]);
		expect(checkSampleParams({ ...p, percent: 0 })).toHaveLength(1);
		expect(checkSampleParams({ ...p, minPerDistrict: 1.5, edgeWeight: 0.5 })).toHaveLength(2);
		expect(() => drawSample(population(), p, '')).toThrow(RangeError);
		expect(() => drawSample(population(), { ...p, percent: 101 }, 's')).toThrow(RangeError);
	});
});

describe('review queue status after a new version', () => {
	it('re-opens only for warnings no verified decision accepted', () => {
		const accepted = new Set(['acres-implausible|extent_acres']);
		expect(statusAfterNewVersion(['acres-implausible|extent_acres'], accepted, true)).toBe('verified');
		expect(statusAfterNewVersion(['acres-implausible|extent_acres', 'formula-in-cell|notes'], accepted, true)).toBe('open');
		expect(statusAfterNewVersion([], accepted, true)).toBe('cleared');
		expect(statusAfterNewVersion([], new Set(), false)).toBeNull();
		expect(statusAfterNewVersion(['x|'], new Set(), false)).toBe('open');
	});
	it('keys warnings by code and column', () => {
		expect(warningKey({ code: 'a', column: null })).toBe('a|');
		expect(
			uniqueWarningKeys([
				{ code: 'b', column: 'c' },
				{ code: 'a', column: null },
				{ code: 'b', column: 'c' }
			])
		).toEqual(['a|', 'b|c']);
	});
});
