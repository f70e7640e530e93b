// The small-cell rule for researcher aggregates (dataset issue): a county × FY × practice cell with fewer
// than k distinct operations is never published as such; it is generalised to the region, then the state,
// or suppressed. The floor comes from Section 1619 of the Food, Conservation, and Energy Act of 2008
// (7 U.S.C. 8791(b)): producers' information only "in statistical or aggregate form". k = 3 is the
// statistical-disclosure convention of "fewer than 3 contributors" (recalled from memory; project
// sources list, Privacy) and is configurable.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { applySmallCellRule, MEASURE_KEYS, zeroMeasures, type BaseCell } from '$lib/domain/small-cell-rule';

function cell(county: string, region: string, ops: string[], extra: Partial<BaseCell> = {}): BaseCell {
	return {
		...zeroMeasures(),
		fy: 2026,
		practice_code: '605',
		county_fips: county,
		region,
		operations: ops.length,
		operation_keys: ops,
		practices: ops.length,
		n_lb_mean: 100 * ops.length,
		...extra
	};
}

describe('small-cell rule, worked examples', () => {
	it('publishes a cell with k operations at county level and pools small cells within their region', () => {
		const { published, counts } = applySmallCellRule(
			[cell('19001', 'South', ['a', 'b', 'c']), cell('19003', 'South', ['d']), cell('19005', 'South', ['e', 'f'])],
			3
		);
		expect(published.map((p) => [p.level, p.county_fips, p.region, p.operations, p.cells])).toEqual([
			['county', '19001', null, 3, 1],
			['region', null, 'South', 3, 2]
		]);
		expect(counts).toEqual({ k: 3, cells: 3, published_as_county: 1, generalised_to_region: 2, generalised_to_state: 0, suppressed: 0 });
	});

	it('counts the union of operations when pooling: the same farm in two counties is one operation', () => {
		const { published, counts } = applySmallCellRule([cell('19003', 'South', ['d', 'e']), cell('19005', 'South', ['d', 'e'])], 3);
		expect(published).toEqual([]);
		expect(counts.suppressed).toBe(2);
	});

	it('goes up to the state when a region cannot reach k, and suppresses when the state cannot either', () => {
		const r = applySmallCellRule([cell('19003', 'South', ['a']), cell('19101', 'North', ['b', 'c'])], 3);
		expect(r.published.map((p) => [p.level, p.operations, p.cells])).toEqual([['state', 3, 2]]);
		expect(r.counts.generalised_to_state).toBe(2);
		const s = applySmallCellRule([cell('19003', 'South', ['a']), cell('19101', 'North', ['b'])], 3);
		expect(s.published).toEqual([]);
		expect(s.counts.suppressed).toBe(2);
	});

	it('never pools across fiscal years or practices', () => {
		const r = applySmallCellRule(
			[
				cell('19003', 'South', ['a', 'b']),
				cell('19005', 'South', ['c'], { fy: 2025 }),
				cell('19007', 'South', ['d'], { practice_code: '340' })
			],
			3
		);
		expect(r.published).toEqual([]);
		expect(r.counts.suppressed).toBe(3);
	});

	it('refuses a small cell without its operation keys (it could not be pooled correctly)', () => {
		expect(() => applySmallCellRule([{ ...cell('19003', 'South', ['a']), operation_keys: null }], 3)).toThrow(/operation keys/);
	});
});

// Random scenarios: operations drawn from a small pool so cells overlap and many are small.
const scenario = fc
	.record({
		k: fc.integer({ min: 1, max: 6 }),
		cells: fc.uniqueArray(
			fc.record({
				county: fc.constantFrom('19001', '19003', '19005', '19007', '19009', '19011'),
				fy: fc.integer({ min: 2024, max: 2026 }),
				practice_code: fc.constantFrom('605', '340'),
				ops: fc.uniqueArray(fc.constantFrom('o1', 'o2', 'o3', 'o4', 'o5', 'o6', 'o7', 'o8'), { minLength: 1, maxLength: 6 }),
				n: fc.integer({ min: 0, max: 10_000 })
			}),
			{ selector: (c) => `${c.county}|${c.fy}|${c.practice_code}`, maxLength: 30 }
		)
	})
	.map(({ k, cells }) => ({
		k,
		cells: cells.map((c): BaseCell => ({
			...zeroMeasures(),
			fy: c.fy,
			practice_code: c.practice_code,
			county_fips: c.county,
			region: ['19001', '19003', '19005'].includes(c.county) ? 'South' : 'North',
			operations: c.ops.length,
			operation_keys: c.ops,
			practices: c.ops.length + 1,
			n_lb_mean: c.n,
			cost_usd: c.n * 3
		}))
	}));

describe('small-cell rule over random scenarios (fast-check)', () => {
	it('every published row has at least k distinct operations, counted as the union of its cells', () => {
		fc.assert(
			fc.property(scenario, ({ k, cells }) => {
				const { published } = applySmallCellRule(cells, k);
				for (const p of published) {
					expect(p.operations).toBeGreaterThanOrEqual(k);
					// Recount from the cells the row pools.
					const members = cells.filter(
						(c) =>
							c.fy === p.fy &&
							c.practice_code === p.practice_code &&
							(p.level === 'county'
								? c.county_fips === p.county_fips
								: p.level === 'region'
									? c.region === p.region && c.operations < k
									: c.operations < k)
					);
					if (p.level === 'county') expect(members).toHaveLength(1);
					if (p.level !== 'state')
						expect(new Set(members.flatMap((m) => m.operation_keys ?? [])).size).toBe(
							p.level === 'county' ? members[0].operations : p.operations
						);
				}
			}),
			{ numRuns: 300 }
		);
	});

	it('no county row for a cell under k; every cell is counted exactly once; suppressed cells appear in no row', () => {
		fc.assert(
			fc.property(scenario, ({ k, cells }) => {
				const { published, counts } = applySmallCellRule(cells, k);
				const small = cells.filter((c) => c.operations < k);
				for (const s of small)
					expect(
						published.some(
							(p) => p.level === 'county' && p.county_fips === s.county_fips && p.fy === s.fy && p.practice_code === s.practice_code
						)
					).toBe(false);
				expect(counts.published_as_county + counts.generalised_to_region + counts.generalised_to_state + counts.suppressed).toBe(
					cells.length
				);
				expect(counts.published_as_county).toBe(cells.length - small.length);
				expect(published.reduce((a, p) => a + p.cells, 0)).toBe(cells.length - counts.suppressed);
				// Measures: what is published plus what is suppressed is everything, for every measure.
				for (const key of MEASURE_KEYS) {
					const all = cells.reduce((a, c) => a + c[key], 0);
					const shown = published.reduce((a, p) => a + p[key], 0);
					expect(shown).toBeLessThanOrEqual(all + 1e-9);
				}
				if (counts.suppressed === 0)
					expect(published.reduce((a, p) => a + p.n_lb_mean, 0)).toBe(cells.reduce((a, c) => a + c.n_lb_mean, 0));
			}),
			{ numRuns: 300 }
		);
	});

	it('a region or state row never pools a cell that is also published at county level', () => {
		fc.assert(
			fc.property(scenario, ({ k, cells }) => {
				const { published } = applySmallCellRule(cells, k);
				const pooledCells = published.filter((p) => p.level !== 'county').reduce((a, p) => a + p.cells, 0);
				expect(pooledCells).toBeLessThanOrEqual(cells.filter((c) => c.operations < k).length);
			}),
			{ numRuns: 200 }
		);
	});
});
