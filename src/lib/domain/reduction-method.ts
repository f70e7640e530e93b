// Reduction methods: a versioned, cited table of per-practice efficiencies (N and P, with their published
// spread), credited basis, lifespan, baseline losses and the bioreactor screening parameters. Pure data and
// lookups; the zod schema that validates a new version lives in src/lib/schema/reduction-method.ts.
//
// Efficiencies are FRACTIONS (0.43 = 43 %). `sd` is the published spread (one standard deviation) as a
// fraction too; low/high of an estimate are mean ∓ sd clipped to [0, 1].
import { PRACTICE_CATALOG, type CreditedBasis } from './practice-catalog';

export type Nutrient = 'n' | 'p';
export const NUTRIENTS: readonly Nutrient[] = ['n', 'p'];

/** What a published percentage applies to: the load leaving the credited area, or the concentration of treated water. */
export type AppliesTo = 'load' | 'concentration';

export interface Citation {
	title: string;
	publisher: string;
	year: number | null;
	/** Table, section or page the value comes from. */
	section: string | null;
	/** True when the value was recalled from memory and not read in a stored copy of the source. */
	recalled: boolean;
	note?: string;
}

export interface EfficiencyValue {
	/** Mean reduction as a fraction 0–1. */
	mean: number;
	/** Published spread (one standard deviation) as a fraction, or null when none is published. */
	sd: number | null;
	applies_to: AppliesTo;
	citation: Citation;
}

export interface PracticeMethod {
	practice_code: string;
	/** The source's own name for the practice it measured, e.g. "Cover crops (cereal rye)". */
	source_practice: string;
	/** null: the method credits no reduction of this nutrient (reason in `note`). */
	n: EfficiencyValue | null;
	p: EfficiencyValue | null;
	credited_basis: CreditedBasis;
	lifespan_years: number;
	lifespan_citation: Citation;
	note: string;
}

export interface BaselineLoss {
	n_lb_per_ac_yr: number;
	p_lb_per_ac_yr: number;
	citation: Citation;
}

export interface CountyBaseline extends BaselineLoss {
	county_fips: string;
}

export interface BioreactorParameters {
	/** Minimum hydraulic retention time at design flow, hours. */
	min_retention_hours: number;
	min_retention_citation: Citation;
	/** Share of peak drainage flow the bed must treat (0.15 = 15 %). */
	design_share_of_peak: number;
	design_share_citation: Citation;
	/** Woodchip porosity used when a record gives none. */
	default_porosity: number;
	porosity_citation: Citation;
}

export interface ReductionMethod {
	/** Unique, e.g. `ia-2017.1`: lowercase letters, digits, dot, dash. */
	version: string;
	label: string;
	description: string;
	practices: PracticeMethod[];
	baseline: { statewide: BaselineLoss; counties: CountyBaseline[] };
	bioreactor: BioreactorParameters;
	/** Caveats shown with the method and written into exports. */
	notes: string[];
}

export const METHOD_VERSION_RE = /^[a-z0-9][a-z0-9.-]{0,39}$/;

// --- lookups ---------------------------------------------------------------------------------------

export function practiceMethod(method: ReductionMethod, code: string): PracticeMethod | undefined {
	return method.practices.find((p) => p.practice_code === code);
}

/** Baseline loss for a county: its override when the method has one, else the statewide value. */
export function baselineFor(method: ReductionMethod, countyFips: string): BaselineLoss & { source: 'county' | 'statewide' } {
	const c = method.baseline.counties.find((x) => x.county_fips === countyFips);
	return c ? { ...c, source: 'county' } : { ...method.baseline.statewide, source: 'statewide' };
}

/** Every citation a method relies on, de-duplicated, for "Method and sources" sheets and pages. */
export function methodCitations(method: ReductionMethod): Citation[] {
	const all: Citation[] = [];
	for (const p of method.practices) {
		if (p.n) all.push(p.n.citation);
		if (p.p) all.push(p.p.citation);
		all.push(p.lifespan_citation);
	}
	all.push(method.baseline.statewide.citation, ...method.baseline.counties.map((c) => c.citation));
	all.push(method.bioreactor.min_retention_citation, method.bioreactor.design_share_citation, method.bioreactor.porosity_citation);
	const seen = new Set<string>();
	return all.filter((c) => {
		const k = JSON.stringify([c.title, c.publisher, c.year, c.section, c.recalled]);
		if (seen.has(k)) return false;
		seen.add(k);
		return true;
	});
}

/** "Title, Publisher, Year, Section" and, unless told not to, " (from memory)" for recalled values. */
export function formatCitation(c: Citation, opts: { markRecalled?: boolean } = {}): string {
	const parts = [c.title, c.publisher, c.year === null ? null : String(c.year), c.section].filter((x): x is string => !!x);
	return parts.join(', ') + (c.recalled && opts.markRecalled !== false ? ' (from memory)' : '');
}

/** Problems a method has beyond its shape (the zod schema checks the shape); empty when it is sound. */
export function methodProblems(method: ReductionMethod): { path: string; detail: string }[] {
	const out: { path: string; detail: string }[] = [];
	if (!METHOD_VERSION_RE.test(method.version)) {
		out.push({ path: '/version', detail: 'Use 1–40 lowercase letters, digits, dots or dashes, e.g. ia-2017.2.' });
	}
	const seen = new Set<string>();
	method.practices.forEach((p, i) => {
		if (seen.has(p.practice_code))
			out.push({ path: `/practices/${i}/practice_code`, detail: `Practice ${p.practice_code} is listed twice.` });
		seen.add(p.practice_code);
		if (!PRACTICE_CATALOG.some((c) => c.code === p.practice_code)) {
			out.push({ path: `/practices/${i}/practice_code`, detail: `${p.practice_code} is not in the practice catalog.` });
		}
		for (const k of NUTRIENTS) {
			const e = p[k];
			if (!e) continue;
			if (!(e.mean >= 0 && e.mean <= 1))
				out.push({ path: `/practices/${i}/${k}/mean`, detail: 'An efficiency is a fraction from 0 to 1.' });
			if (e.sd !== null && !(e.sd >= 0 && e.sd <= 1))
				out.push({ path: `/practices/${i}/${k}/sd`, detail: 'A spread is a fraction from 0 to 1.' });
		}
		if (!(Number.isInteger(p.lifespan_years) && p.lifespan_years >= 1)) {
			out.push({ path: `/practices/${i}/lifespan_years`, detail: 'A lifespan is a whole number of years, at least 1.' });
		}
	});
	const fipsSeen = new Set<string>();
	method.baseline.counties.forEach((c, i) => {
		if (fipsSeen.has(c.county_fips))
			out.push({ path: `/baseline/counties/${i}/county_fips`, detail: `County ${c.county_fips} has two overrides.` });
		fipsSeen.add(c.county_fips);
	});
	const b = method.bioreactor;
	if (!(b.default_porosity > 0 && b.default_porosity <= 1))
		out.push({ path: '/bioreactor/default_porosity', detail: 'Porosity is a fraction above 0, at most 1.' });
	if (!(b.design_share_of_peak > 0 && b.design_share_of_peak <= 1)) {
		out.push({ path: '/bioreactor/design_share_of_peak', detail: 'The design share is a fraction above 0, at most 1.' });
	}
	if (!(b.min_retention_hours > 0))
		out.push({ path: '/bioreactor/min_retention_hours', detail: 'The minimum retention time is above 0 hours.' });
	return out;
}

// --- the default method ----------------------------------------------------------------------------

const INRS_TITLE = 'Iowa Nutrient Reduction Strategy, Section 2: Iowa science assessment of nonpoint source practices';
const INRS_PUBLISHER =
	'Iowa State University College of Agriculture and Life Sciences, with the Iowa Department of Agriculture and Land Stewardship';
const INRS_YEAR = 2017; // assessment 2013, strategy document updated December 2017

/** A value read in a stored copy of the assessment (project source list, marked [S]). */
const inrs = (section: string, note?: string): Citation => ({
	title: INRS_TITLE,
	publisher: INRS_PUBLISHER,
	year: INRS_YEAR,
	section,
	recalled: false,
	...(note ? { note } : {})
});
/** A value recalled from memory of the assessment's practice tables, not confirmed against a stored copy. */
const inrsRecalled = (section: string, note?: string): Citation => ({ ...inrs(section, note), recalled: true });

const N_TABLE = 'nitrogen practice table, % nitrate-N reduction, average (SD)';
const P_TABLE = 'phosphorus practice table, % total P load reduction, average (SD)';

const LIFESPAN_CITATION: Citation = {
	title: 'NRCS conservation practice lifespans (practice lifespan list)',
	publisher: 'USDA Natural Resources Conservation Service',
	year: null,
	section: null,
	recalled: true,
	note: 'Copied from the practice catalog, whose lifespans are recalled from memory.'
};

interface Row {
	code: string;
	source_practice: string;
	n: EfficiencyValue | null;
	p: EfficiencyValue | null;
	note: string;
}

const NOT_COVERED = (what: string) => `${what} Credited 0 until an administrator adds a cited value in a new method version.`;

// Which assessment practice each catalog code is credited as. Values marked recalled: see each citation.
const ROWS: Row[] = [
	{
		code: '605',
		source_practice: 'Bioreactors',
		n: {
			mean: 0.43,
			sd: 0.21,
			applies_to: 'concentration',
			citation: inrs(N_TABLE, 'Mean 43 % read in a stored copy; SD 21 recalled from memory.')
		},
		p: null,
		note: 'A nitrate practice; the assessment lists bioreactors for nitrogen only, so no phosphorus credit.'
	},
	{
		code: '340',
		source_practice: 'Cover crops (cereal rye)',
		n: { mean: 0.31, sd: 0.29, applies_to: 'concentration', citation: inrs(N_TABLE) },
		p: { mean: 0.29, sd: 0.37, applies_to: 'load', citation: inrsRecalled(P_TABLE) },
		note: 'Credited as a cereal-rye cover crop; other species reduce less in the assessment (oat, recalled 28 %).'
	},
	{
		code: '554',
		source_practice: 'Drainage water management (controlled drainage)',
		n: {
			mean: 0.33,
			sd: 0.32,
			applies_to: 'load',
			citation: inrs(N_TABLE, 'Mean 33 % read in a stored copy; SD 32 recalled from memory.')
		},
		p: null,
		note: 'A load reduction through less drainage volume, not a lower concentration. Nitrogen only in the assessment.'
	},
	{
		code: '656',
		source_practice: 'Wetlands (targeted water quality)',
		n: {
			mean: 0.52,
			sd: 0.26,
			applies_to: 'concentration',
			citation: inrs(N_TABLE, 'Mean 52 % read in a stored copy; SD 26 recalled from memory.')
		},
		p: null,
		note: NOT_COVERED('No phosphorus efficiency for wetlands could be confirmed or recalled with confidence.')
	},
	{
		code: '604',
		source_practice: 'Saturated buffers',
		n: {
			mean: 0.5,
			sd: 0.13,
			applies_to: 'concentration',
			citation: inrsRecalled(N_TABLE, 'Mean 50 % and SD 13 both recalled from memory.')
		},
		p: null,
		note: NOT_COVERED('No phosphorus efficiency for saturated buffers could be confirmed or recalled with confidence.')
	},
	{
		code: '390',
		source_practice: 'Buffers (riparian)',
		n: {
			mean: 0.91,
			sd: 0.2,
			applies_to: 'concentration',
			citation: inrsRecalled(N_TABLE, 'Concentration of shallow groundwater passing through the buffer.')
		},
		p: { mean: 0.58, sd: 0.32, applies_to: 'load', citation: inrsRecalled(P_TABLE) },
		note: 'Credited on the buffer’s own acres (extent), which understates what it treats upslope.'
	},
	{
		code: '391',
		source_practice: 'Buffers (riparian)',
		n: {
			mean: 0.91,
			sd: 0.2,
			applies_to: 'concentration',
			citation: inrsRecalled(N_TABLE, 'Concentration of shallow groundwater passing through the buffer.')
		},
		p: { mean: 0.58, sd: 0.32, applies_to: 'load', citation: inrsRecalled(P_TABLE) },
		note: 'Credited on the buffer’s own acres (extent), which understates what it treats upslope.'
	},
	{
		code: '393',
		source_practice: 'Buffers (filter strip credited as a buffer)',
		n: null,
		p: { mean: 0.58, sd: 0.32, applies_to: 'load', citation: inrsRecalled(P_TABLE) },
		note: 'Phosphorus credited as the assessment’s buffers; a filter strip treats surface runoff, so no nitrate credit.'
	},
	{
		code: '327',
		source_practice: 'Perennial land retirement',
		n: { mean: 0.85, sd: 0.09, applies_to: 'concentration', citation: inrsRecalled(N_TABLE) },
		p: null,
		note: NOT_COVERED('The phosphorus value for land retirement could not be recalled with confidence.')
	},
	{
		code: '328',
		source_practice: 'Extended rotations (at least 2 years of alfalfa in a 4- or 5-year rotation)',
		n: { mean: 0.42, sd: 0.12, applies_to: 'concentration', citation: inrsRecalled(N_TABLE) },
		p: null,
		note: NOT_COVERED('No phosphorus efficiency for extended rotations could be recalled with confidence.')
	},
	{
		code: '329',
		source_practice: 'No-till (compared with chisel plowing)',
		n: null,
		p: { mean: 0.9, sd: 0.1, applies_to: 'load', citation: inrsRecalled(P_TABLE) },
		note: 'Phosphorus only; the assessment found no consistent nitrate effect of tillage.'
	},
	{
		code: '600',
		source_practice: 'Terraces',
		n: null,
		p: { mean: 0.77, sd: 0.19, applies_to: 'load', citation: inrsRecalled(P_TABLE) },
		note: 'An erosion-control practice: phosphorus only.'
	},
	{
		code: '638',
		source_practice: 'Sediment control structures',
		n: null,
		p: { mean: 0.85, sd: null, applies_to: 'load', citation: inrsRecalled(P_TABLE, 'No spread recalled.') },
		note: 'An erosion-control practice: phosphorus only.'
	},
	{
		code: '345',
		source_practice: '—',
		n: null,
		p: null,
		note: NOT_COVERED('The assessment’s conservation-tillage value could not be recalled with confidence.')
	},
	{
		code: '386',
		source_practice: '—',
		n: null,
		p: null,
		note: NOT_COVERED('Field borders are not a practice of the assessment.')
	},
	{
		code: '410',
		source_practice: '—',
		n: null,
		p: null,
		note: NOT_COVERED('Grade stabilization structures are not a practice of the assessment.')
	},
	{
		code: '412',
		source_practice: '—',
		n: null,
		p: null,
		note: NOT_COVERED('Grassed waterways appear among the assessment’s phosphorus practices, but no value could be confirmed or recalled.')
	},
	{
		code: '587',
		source_practice: '—',
		n: null,
		p: null,
		note: NOT_COVERED('A water control structure is a component of other practices (credited through 554 or 604).')
	},
	{
		code: '590',
		source_practice: '—',
		n: null,
		p: null,
		note: NOT_COVERED(
			'The assessment rates specific nitrogen management choices (rate, timing, source, inhibitor), not nutrient management as a whole.'
		)
	},
	{
		code: '657',
		source_practice: '—',
		n: null,
		p: null,
		note: NOT_COVERED('The assessment’s wetland value is for wetlands sited and built to treat drainage water (credited under 656).')
	}
];

const STATEWIDE_BASELINE: BaselineLoss = {
	n_lb_per_ac_yr: 10,
	p_lb_per_ac_yr: 1.4,
	citation: {
		title: 'Illinois Nutrient Loss Reduction Strategy',
		publisher: 'Illinois Environmental Protection Agency and Illinois Department of Agriculture',
		year: 2015,
		section: 'statewide riverine yields, 1980–1996 baseline: nitrate-N 10 lb N/ac/yr, total P 1.4 lb P/ac/yr',
		recalled: false,
		note:
			'A neighbouring Corn Belt state’s published statewide yield over all land, used because it was read in a stored copy. ' +
			'Tile-drained corn–soybean fields lose more (roughly 20–30 lb N/ac/yr, recalled from memory), so estimates on this baseline are conservative. ' +
			'Replace it with the hub state’s own statewide loss in a new method version when one is confirmed.'
	}
};

export const DEFAULT_METHOD_VERSION = 'ia-2017.1';

function buildDefault(): ReductionMethod {
	const catalog = new Map(PRACTICE_CATALOG.map((c) => [c.code, c]));
	const practices: PracticeMethod[] = PRACTICE_CATALOG.map((c) => {
		const row = ROWS.find((r) => r.code === c.code);
		if (!row) throw new Error(`default method: no row for practice ${c.code}`);
		return {
			practice_code: c.code,
			source_practice: row.source_practice,
			n: row.n,
			p: row.p,
			credited_basis: catalog.get(c.code)!.credited_basis,
			lifespan_years: c.lifespan_years,
			lifespan_citation: LIFESPAN_CITATION,
			note: row.note
		};
	});
	return {
		version: DEFAULT_METHOD_VERSION,
		label: 'Iowa science assessment (2013, updated 2017), first edition',
		description:
			'Efficiencies from the Iowa Nutrient Reduction Strategy science assessment (Iowa State University, 2013; strategy updated 2017). ' +
			'Each value says whether it was read in a stored copy of the source or recalled from memory.',
		practices,
		baseline: { statewide: STATEWIDE_BASELINE, counties: [] },
		bioreactor: {
			min_retention_hours: 3,
			min_retention_citation: {
				title: 'Conservation Practice Standard 605, Denitrifying Bioreactor',
				publisher: 'USDA Natural Resources Conservation Service',
				year: null,
				section: 'Criteria: minimum hydraulic retention time at design flow',
				recalled: true,
				note: 'The 3-hour minimum is recalled from memory of the standard; drainage practice guidance read in a stored copy gives 3–8 hours at design flow.'
			},
			design_share_of_peak: 0.15,
			design_share_citation: {
				title: 'Conservation Practice Standard 605, Denitrifying Bioreactor',
				publisher: 'USDA Natural Resources Conservation Service',
				year: null,
				section: 'Criteria: treat at least 15 % of the peak flow from the drainage system',
				recalled: false,
				note: 'Also common practice. The standard allows 10 % where NRCS monitors systematically.'
			},
			default_porosity: 0.7,
			porosity_citation: {
				title: 'Christianson, Bhandari & Helmers (2010), hydraulic properties of woodchip bioreactor fill',
				publisher: 'Applied Engineering in Agriculture 26(5):849–854, American Society of Agricultural and Biological Engineers',
				year: 2010,
				section: 'woodchip porosity 66–78 % depending on packing',
				recalled: false
			}
		},
		notes: [
			'Estimate per record = credited acres × baseline loss (lb/ac/yr) × efficiency; low and high use mean ∓ one SD, clipped to 0–100 %.',
			'The assessment mixes concentration and load reductions; each value says which. A concentration reduction is credited as if flow were unchanged.',
			'Practices on the same field combine as 1 − Π(1 − e), never added; the combined reduction is shared in proportion to each practice’s efficiency.',
			'Values marked “from memory” were not confirmed against a stored copy of the source; check them before relying on them in a report.',
			'Practices the method credits 0 are counted (acres, dollars) but add no pounds.'
		]
	};
}

/** The method every new hub starts with (seeded, never overwritten once stored). */
export const DEFAULT_METHOD: ReductionMethod = buildDefault();
