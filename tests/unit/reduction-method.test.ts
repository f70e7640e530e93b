// The default reduction method against its sources. Efficiencies: Iowa Nutrient Reduction Strategy,
// Section 2 science assessment (Iowa State University College of Agriculture and Life Sciences, 2013;
// strategy updated 2017), nitrogen and phosphorus practice tables, "average (SD)". [S] = read in a stored
// copy of the source (project source list); [M] = recalled from memory and flagged `recalled` in the data.
import { describe, expect, it } from 'vitest';
import { PRACTICE_CATALOG } from '../../src/lib/domain/practice-catalog';
import {
	baselineFor,
	DEFAULT_METHOD,
	DEFAULT_METHOD_VERSION,
	formatCitation,
	methodCitations,
	methodProblems,
	practiceMethod,
	type ReductionMethod
} from '../../src/lib/domain/reduction-method';
import { ReductionMethodSchema } from '../../src/lib/schema/reduction-method';

const m = DEFAULT_METHOD;
const pm = (code: string) => {
	const x = practiceMethod(m, code);
	if (!x) throw new Error(code);
	return x;
};

describe(`default method ${DEFAULT_METHOD_VERSION}: nitrate-N efficiencies (Iowa NRS science assessment, N practice table)`, () => {
	it('woodchip bioreactor 605: 43 % [S], SD 21 [M], a concentration reduction of treated water', () => {
		expect(pm('605').n).toMatchObject({ mean: 0.43, sd: 0.21, applies_to: 'concentration' });
		expect(pm('605').n!.citation.recalled).toBe(false);
		expect(pm('605').n!.citation.note).toMatch(/SD 21 recalled from memory/);
	});
	it('cereal-rye cover crop 340: 31 % with SD 29 [S]', () => {
		expect(pm('340').n).toMatchObject({ mean: 0.31, sd: 0.29 });
		expect(pm('340').n!.citation.recalled).toBe(false);
	});
	it('drainage water management 554: 33 % [S], a LOAD reduction (less drainage volume); SD 32 [M]', () => {
		expect(pm('554').n).toMatchObject({ mean: 0.33, sd: 0.32, applies_to: 'load' });
	});
	it('wetlands 656: 52 % concentration [S], SD 26 [M]', () => {
		expect(pm('656').n).toMatchObject({ mean: 0.52, sd: 0.26, applies_to: 'concentration' });
	});
	it('saturated buffer 604: 50 %, SD 13 — both recalled from memory [M]', () => {
		expect(pm('604').n).toMatchObject({ mean: 0.5, sd: 0.13 });
		expect(pm('604').n!.citation.recalled).toBe(true);
	});
	it('bioreactors and drainage water management earn no phosphorus credit (nitrogen practices in the assessment)', () => {
		expect(pm('605').p).toBeNull();
		expect(pm('554').p).toBeNull();
	});
});

describe('default method: coverage and honesty flags', () => {
	it('has one entry per catalog practice, with the catalog’s credited basis and lifespan', () => {
		expect(m.practices.map((p) => p.practice_code).sort()).toEqual(PRACTICE_CATALOG.map((c) => c.code).sort());
		for (const c of PRACTICE_CATALOG) {
			expect(pm(c.code).credited_basis).toBe(c.credited_basis);
			expect(pm(c.code).lifespan_years).toBe(c.lifespan_years);
		}
	});
	it('every practice the method does not credit says why', () => {
		for (const p of m.practices) if (!p.n && !p.p) expect(p.note, p.practice_code).toMatch(/Credited 0/);
	});
	it('every value not read in a stored copy is flagged recalled, and shows "(from memory)" when printed', () => {
		const recalledCodes = m.practices.filter((p) => p.n?.citation.recalled || p.p?.citation.recalled).map((p) => p.practice_code);
		expect(recalledCodes).toEqual(expect.arrayContaining(['604', '340', '390', '391', '393', '327', '328', '329', '600', '638']));
		expect(formatCitation(pm('604').n!.citation)).toMatch(/\(from memory\)$/);
		expect(formatCitation(pm('340').n!.citation)).not.toMatch(/from memory/);
	});
	it('baseline: Illinois NLRS 2015 statewide 1980–96 yields, 10 lb N and 1.4 lb P per acre per year [S]', () => {
		expect(m.baseline.statewide).toMatchObject({ n_lb_per_ac_yr: 10, p_lb_per_ac_yr: 1.4 });
		expect(m.baseline.statewide.citation).toMatchObject({ year: 2015, recalled: false });
		expect(m.baseline.statewide.citation.note).toMatch(/conservative/);
	});
	it('bioreactor parameters: 3 h minimum retention (recalled), 15 % of peak (CPS 605 [S]), porosity 0.70 (Christianson et al. 2010 [S])', () => {
		expect(m.bioreactor.min_retention_hours).toBe(3);
		expect(m.bioreactor.min_retention_citation.recalled).toBe(true);
		expect(m.bioreactor.design_share_of_peak).toBe(0.15);
		expect(m.bioreactor.design_share_citation.recalled).toBe(false);
		expect(m.bioreactor.default_porosity).toBe(0.7);
		expect(m.bioreactor.porosity_citation.year).toBe(2010);
	});
	it('is sound: no problems, and the zod schema accepts it unchanged', () => {
		expect(methodProblems(m)).toEqual([]);
		expect(ReductionMethodSchema.parse(structuredClone(m))).toEqual(m);
	});
	it('lists every citation once', () => {
		const cites = methodCitations(m);
		expect(new Set(cites.map((c) => JSON.stringify(c))).size).toBe(cites.length);
		expect(cites.some((c) => c.title.startsWith('Illinois'))).toBe(true);
	});
});

describe('baselines with county overrides', () => {
	const withOverride: ReductionMethod = {
		...m,
		baseline: {
			...m.baseline,
			counties: [
				{
					county_fips: '19169',
					n_lb_per_ac_yr: 25,
					p_lb_per_ac_yr: 2,
					citation: { ...m.baseline.statewide.citation, section: 'test override' }
				}
			]
		}
	};
	it('a county override wins; other counties fall back to statewide', () => {
		expect(baselineFor(withOverride, '19169')).toMatchObject({ n_lb_per_ac_yr: 25, p_lb_per_ac_yr: 2, source: 'county' });
		expect(baselineFor(withOverride, '19001')).toMatchObject({ n_lb_per_ac_yr: 10, p_lb_per_ac_yr: 1.4, source: 'statewide' });
	});
});

describe('methodProblems and the schema catch bad versions', () => {
	const bad = (patch: (x: ReductionMethod) => void) => {
		const x = structuredClone(m);
		patch(x);
		return x;
	};
	it.each([
		['an upper-case version', (x: ReductionMethod) => void (x.version = 'IA 2017'), '/version'],
		['an efficiency above 1', (x: ReductionMethod) => void (x.practices[0].n = { ...pm('605').n!, mean: 43 }), '/practices/0/n/mean'],
		['a practice twice', (x: ReductionMethod) => void x.practices.push(structuredClone(x.practices[0])), '/practices/20/practice_code'],
		['an unknown practice', (x: ReductionMethod) => void (x.practices[0].practice_code = '999'), '/practices/0/practice_code'],
		['a zero lifespan', (x: ReductionMethod) => void (x.practices[0].lifespan_years = 0), '/practices/0/lifespan_years'],
		['porosity above 1', (x: ReductionMethod) => void (x.bioreactor.default_porosity = 70), '/bioreactor/default_porosity']
	])('%s', (_label, patch, path) => {
		const x = bad(patch);
		expect(methodProblems(x).map((p) => p.path)).toContain(path);
		const parsed = ReductionMethodSchema.safeParse(x);
		expect(parsed.success).toBe(false);
	});
});
