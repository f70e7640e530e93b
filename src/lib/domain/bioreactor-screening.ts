// Design screening of a denitrifying bioreactor record (practice 605). Warnings, never rejections; a
// screening estimate, not a design.
//
// - Peak drainage flow from drainage coefficient × drained area (drainage.ts; NRCS EFH Part 650 Ch. 14).
// - Design flow = the method's design share of peak (default 15 %: NRCS Conservation Practice Standard 605,
//   "treat at least 15 % of the peak flow", also common practice).
// - Pore volume = length × width × depth × porosity (default 0.70; woodchips 66–78 %, Christianson,
//   Bhandari & Helmers 2010).
// - Flow the bed treats at the method's minimum retention time = pore volume ÷ minimum retention; and the
//   retention time at design flow = pore volume ÷ design flow.
// - When the main's diameter and slope are given, its full-pipe capacity by Manning's equation (manning.ts).
// With the default parameters the first two warnings coincide (design flow is 15 % of peak); a method with
// another design share or minimum tells them apart.
import type { Finding } from '../schema/findings';
import { peakDrainageFlowCfs } from './drainage';
import { corrugatedTubingRoughness, manningFullPipeCfs } from './manning';
import { DEFAULT_METHOD, type ReductionMethod } from './reduction-method';

export const SCREENING_CAUTION =
	'These are screening estimates, not a design. Design and installation follow the practice standard (NRCS Conservation Practice Standard 605, Denitrifying Bioreactor), local codes, and a licensed engineer or NRCS-approved designer.';

export const BIOREACTOR_CODE = '605';

export type ScreeningCode = 'bioreactor-treats-under-15pct' | 'bioreactor-retention-short' | 'main-capacity-below-peak';
export const SCREENING_CODES: readonly ScreeningCode[] = [
	'bioreactor-treats-under-15pct',
	'bioreactor-retention-short',
	'main-capacity-below-peak'
];

/** The record columns screening reads (schema v1 names). Strings are accepted (PostgreSQL numerics, CSV cells). */
export interface BioreactorFields {
	practice_code?: string | null;
	drainage_area_acres?: number | string | null;
	drainage_coefficient_in_per_day?: number | string | null;
	bed_length_ft?: number | string | null;
	bed_width_ft?: number | string | null;
	bed_depth_ft?: number | string | null;
	main_diameter_in?: number | string | null;
	main_slope_pct?: number | string | null;
	media_porosity?: number | string | null;
}

/**
 * A number with its unit. `unit` is a unit expression general unit libraries parse (e.g. mathjs:
 * `ft^3/s`, `ft^3`, `hour`, `acre`, `inch/day`, `inch`, `ft`), `%` for percentages and '' for plain
 * ratios; `label` is the symbol shown to people (cfs, ft³, h, ac, in/day, in, ft, %).
 */
export interface Quantity {
	value: number;
	unit: string;
	label: string;
}

export interface ScreeningWarning {
	code: ScreeningCode;
	column: keyof BioreactorFields | null;
	message: string;
}

export interface MainCheck {
	diameter: Quantity;
	slope: Quantity;
	manning_n: number;
	manning_n_basis: string;
	capacity: Quantity;
	capacity_share_of_peak: Quantity;
}

export interface ScreeningResult {
	available: true;
	method_version: string;
	inputs: {
		drainage_area: Quantity;
		drainage_coefficient: Quantity;
		bed_length: Quantity;
		bed_width: Quantity;
		bed_depth: Quantity;
		porosity: Quantity;
		porosity_is_default: boolean;
		min_retention: Quantity;
		design_share_of_peak: Quantity;
	};
	peak_flow: Quantity;
	design_flow: Quantity;
	bed_volume: Quantity;
	pore_volume: Quantity;
	/** Flow the bed can treat while holding water for the minimum retention time. */
	treatable_flow: Quantity;
	treated_share_of_peak: Quantity;
	/** Retention time at the design flow. */
	retention_at_design_flow: Quantity;
	/** Pore space and bed volume the design flow needs at the minimum retention time. */
	required_pore_volume: Quantity;
	required_bed_volume: Quantity;
	main: MainCheck | null;
	warnings: ScreeningWarning[];
	caution: string;
}

export interface ScreeningUnavailable {
	available: false;
	method_version: string;
	/** Columns screening needs that the record leaves empty. */
	missing: (keyof BioreactorFields)[];
	/** Columns present but not usable (not a number, out of range). */
	invalid: { column: keyof BioreactorFields; message: string }[];
	caution: string;
}

export type BioreactorScreening = ScreeningResult | ScreeningUnavailable;

export const REQUIRED_FIELDS: readonly (keyof BioreactorFields)[] = [
	'drainage_area_acres',
	'drainage_coefficient_in_per_day',
	'bed_length_ft',
	'bed_width_ft',
	'bed_depth_ft'
];
export const SCREENING_FIELDS: readonly (keyof BioreactorFields)[] = [
	...REQUIRED_FIELDS,
	'main_diameter_in',
	'main_slope_pct',
	'media_porosity'
];

const q = (value: number, unit: string, label: string): Quantity => ({ value, unit, label });
const SECONDS_PER_HOUR = 3600;

function isBlank(v: unknown): boolean {
	return v === null || v === undefined || (typeof v === 'string' && v.trim() === '');
}

function readNumber(v: number | string | null | undefined): number | null {
	if (isBlank(v)) return null;
	const n = typeof v === 'number' ? v : Number(String(v).trim());
	return Number.isFinite(n) ? n : NaN;
}

/** Whether a record carries any of the fields screening reads (beyond the drained area every 605 has). */
export function hasScreeningData(record: BioreactorFields): boolean {
	return SCREENING_FIELDS.some((f) => f !== 'drainage_area_acres' && !isBlank(record[f]));
}

const fmt = (x: number, digits: number) => x.toLocaleString('en-US', { minimumFractionDigits: digits, maximumFractionDigits: digits });

/** Screens one bioreactor record against a method's parameters; all numbers carry their units. */
export function screenBioreactor(record: BioreactorFields, method: ReductionMethod = DEFAULT_METHOD): BioreactorScreening {
	const params = method.bioreactor;
	const missing: (keyof BioreactorFields)[] = [];
	const invalid: { column: keyof BioreactorFields; message: string }[] = [];
	const positive = (col: keyof BioreactorFields, what: string): number | null => {
		const v = readNumber(record[col]);
		if (v === null) {
			if (REQUIRED_FIELDS.includes(col)) missing.push(col);
			return null;
		}
		if (!(v > 0)) {
			invalid.push({ column: col, message: `${what} must be a number above 0.` });
			return null;
		}
		return v;
	};
	const area = positive('drainage_area_acres', 'The drained area');
	const dc = positive('drainage_coefficient_in_per_day', 'The drainage coefficient');
	const length = positive('bed_length_ft', 'The bed length');
	const width = positive('bed_width_ft', 'The bed width');
	const depth = positive('bed_depth_ft', 'The bed depth');
	const diameter = positive('main_diameter_in', 'The main diameter');
	const slopePct = positive('main_slope_pct', 'The main slope');
	let porosity = readNumber(record.media_porosity);
	const porosityIsDefault = porosity === null;
	if (porosity === null) porosity = params.default_porosity;
	else if (!(porosity > 0 && porosity <= 1)) {
		invalid.push({ column: 'media_porosity', message: 'Porosity is a fraction above 0 and at most 1 (woodchips are about 0.66–0.78).' });
	}
	if (missing.length > 0 || invalid.length > 0 || area === null || dc === null || length === null || width === null || depth === null) {
		return { available: false, method_version: method.version, missing, invalid, caution: SCREENING_CAUTION };
	}

	const peak = peakDrainageFlowCfs(dc, area);
	const design = params.design_share_of_peak * peak;
	const bedVolume = length * width * depth;
	const pore = bedVolume * porosity;
	const minSeconds = params.min_retention_hours * SECONDS_PER_HOUR;
	const treatable = pore / minSeconds;
	const treatedShare = treatable / peak;
	const retentionHours = pore / design / SECONDS_PER_HOUR;
	const requiredPore = design * minSeconds;
	const requiredBed = requiredPore / porosity;

	let main: MainCheck | null = null;
	if (diameter !== null && slopePct !== null) {
		const rough = corrugatedTubingRoughness(diameter);
		const capacity = manningFullPipeCfs(diameter, slopePct / 100, rough.n);
		main = {
			diameter: q(diameter, 'inch', 'in'),
			slope: q(slopePct, '%', '%'),
			manning_n: rough.n,
			manning_n_basis: rough.basis,
			capacity: q(capacity, 'ft^3/s', 'cfs'),
			capacity_share_of_peak: q((capacity / peak) * 100, '%', '%')
		};
	}

	const warnings: ScreeningWarning[] = [];
	const sharePct = params.design_share_of_peak * 100;
	if (treatedShare < params.design_share_of_peak) {
		warnings.push({
			code: 'bioreactor-treats-under-15pct',
			column: 'bed_length_ft',
			message:
				`At the ${fmt(params.min_retention_hours, 1)}-hour minimum retention the bed treats ${fmt(treatable, 3)} cfs, ` +
				`${fmt(treatedShare * 100, 1)}% of the ${fmt(peak, 3)} cfs peak drainage flow; the practice standard asks for at least ${fmt(sharePct, 0)}%. ` +
				`That needs about ${fmt(requiredBed, 0)} ft³ of bed at porosity ${fmt(porosity, 2)} (this bed: ${fmt(bedVolume, 0)} ft³).`
		});
	}
	if (retentionHours < params.min_retention_hours) {
		warnings.push({
			code: 'bioreactor-retention-short',
			column: 'bed_length_ft',
			message:
				`At the design flow (${fmt(sharePct, 0)}% of peak, ${fmt(design, 3)} cfs) water stays in the bed about ${fmt(retentionHours, 1)} hours, ` +
				`less than the ${fmt(params.min_retention_hours, 1)}-hour minimum of the reduction method.`
		});
	}
	if (main && main.capacity.value < peak) {
		warnings.push({
			code: 'main-capacity-below-peak',
			column: 'main_diameter_in',
			message:
				`The ${fmt(diameter!, 0)}-in main at ${fmt(slopePct!, 2)}% slope carries about ${fmt(main.capacity.value, 3)} cfs flowing full (Manning n ${main.manning_n}), ` +
				`less than the ${fmt(peak, 3)} cfs peak from ${fmt(dc, 2)} in/day over ${fmt(area, 1)} ac. Check the diameter, slope, drainage coefficient and drained area.`
		});
	}

	return {
		available: true,
		method_version: method.version,
		inputs: {
			drainage_area: q(area, 'acre', 'ac'),
			drainage_coefficient: q(dc, 'inch/day', 'in/day'),
			bed_length: q(length, 'ft', 'ft'),
			bed_width: q(width, 'ft', 'ft'),
			bed_depth: q(depth, 'ft', 'ft'),
			porosity: q(porosity, '', ''),
			porosity_is_default: porosityIsDefault,
			min_retention: q(params.min_retention_hours, 'hour', 'h'),
			design_share_of_peak: q(sharePct, '%', '%')
		},
		peak_flow: q(peak, 'ft^3/s', 'cfs'),
		design_flow: q(design, 'ft^3/s', 'cfs'),
		bed_volume: q(bedVolume, 'ft^3', 'ft³'),
		pore_volume: q(pore, 'ft^3', 'ft³'),
		treatable_flow: q(treatable, 'ft^3/s', 'cfs'),
		treated_share_of_peak: q(treatedShare * 100, '%', '%'),
		retention_at_design_flow: q(retentionHours, 'hour', 'h'),
		required_pore_volume: q(requiredPore, 'ft^3', 'ft³'),
		required_bed_volume: q(requiredBed, 'ft^3', 'ft³'),
		main,
		warnings,
		caution: SCREENING_CAUTION
	};
}

export interface DesignCheckOptions {
	method?: ReductionMethod;
	/** 1-based row number, header counted, when checking a file row. */
	row?: number | null;
	/** Column name → 1-based column number in the file, to fill `column_number`. */
	columnNumbers?: Partial<Record<string, number>>;
}

function columnLetters(n: number): string {
	let s = '';
	for (let x = n; x > 0; x = Math.floor((x - 1) / 26)) s = String.fromCharCode(65 + ((x - 1) % 26)) + s;
	return s;
}

/**
 * The intake checker's design-check hook for bioreactor records: warnings shaped as findings. Returns
 * nothing for other practices and for 605 records that carry no screening fields; a 605 record with some
 * screening fields but not all it needs gets one `bioreactor-screening-incomplete` warning.
 */
export function bioreactorDesignChecks(record: BioreactorFields, opts: DesignCheckOptions = {}): Finding[] {
	if (record.practice_code !== BIOREACTOR_CODE || !hasScreeningData(record)) return [];
	const method = opts.method ?? DEFAULT_METHOD;
	const row = opts.row ?? null;
	const finding = (code: string, column: string | null, message: string, rule: Record<string, unknown>): Finding => {
		const colNo = column ? (opts.columnNumbers?.[column] ?? null) : null;
		const value = column ? record[column as keyof BioreactorFields] : null;
		return {
			code,
			severity: 'warning',
			row,
			column,
			column_number: colNo,
			cell: colNo !== null && row !== null ? `${columnLetters(colNo)}${row}` : null,
			value: value === null || value === undefined ? null : String(value),
			rule,
			message
		};
	};
	const s = screenBioreactor(record, method);
	if (!s.available) {
		const out: Finding[] = [];
		if (s.missing.length > 0) {
			out.push(
				finding(
					'bioreactor-screening-incomplete',
					s.missing[0],
					`Bioreactor screening needs ${s.missing.join(', ')}; the row is accepted, but its design could not be screened.`,
					{ rule: 'bioreactor-screening', needs: [...REQUIRED_FIELDS] }
				)
			);
		}
		for (const inv of s.invalid)
			out.push(finding('bioreactor-screening-incomplete', inv.column, inv.message, { rule: 'bioreactor-screening' }));
		return out;
	}
	return s.warnings.map((w) =>
		finding(w.code, w.column, w.message, {
			rule: 'bioreactor-screening',
			method_version: s.method_version,
			peak_flow_cfs: s.peak_flow.value,
			treatable_flow_cfs: s.treatable_flow.value,
			retention_at_design_flow_h: s.retention_at_design_flow.value,
			min_retention_h: s.inputs.min_retention.value,
			design_share_of_peak_pct: s.inputs.design_share_of_peak.value,
			...(s.main ? { main_capacity_cfs: s.main.capacity.value } : {})
		})
	);
}
