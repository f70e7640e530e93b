// The admin form that adds a reduction method version: a copy of an existing version with edited
// values. Turns the submitted fields into a method document (percentages → fractions), gives every value
// that changed the citation the admin names for it, and maps schema problems back to form fields.
// Pure (no I/O): unit-tested in tests/unit/method-form.test.ts.
import type { Citation, CountyBaseline, EfficiencyValue, Nutrient, ReductionMethod } from './domain/reduction-method';
import { ReductionMethodSchema } from './schema/reduction-method';

export type FormFields = Record<string, string>;
export type FieldErrors = Record<string, string>;

export const fieldName = {
	mean: (code: string, k: Nutrient) => `${code}.${k}_mean`,
	sd: (code: string, k: Nutrient) => `${code}.${k}_sd`,
	applies: (code: string, k: Nutrient) => `${code}.${k}_applies`,
	lifespan: (code: string) => `${code}.lifespan`
};

const pct = (fraction: number | null | undefined) =>
	fraction === null || fraction === undefined ? '' : String(Number((fraction * 100).toFixed(4)));

/** The form's initial values: the base method's numbers, percentages for efficiencies and shares. */
export function methodToFields(m: ReductionMethod): FormFields {
	const f: FormFields = {
		version: '',
		label: '',
		description: m.description,
		baseline_n: String(m.baseline.statewide.n_lb_per_ac_yr),
		baseline_p: String(m.baseline.statewide.p_lb_per_ac_yr),
		counties: m.baseline.counties.map((c) => `${c.county_fips}, ${c.n_lb_per_ac_yr}, ${c.p_lb_per_ac_yr}`).join('\n'),
		min_retention_hours: String(m.bioreactor.min_retention_hours),
		design_share_pct: pct(m.bioreactor.design_share_of_peak),
		default_porosity: String(m.bioreactor.default_porosity),
		notes: m.notes.join('\n'),
		cite_title: '',
		cite_publisher: '',
		cite_year: '',
		cite_section: '',
		cite_recalled: ''
	};
	for (const p of m.practices) {
		for (const k of ['n', 'p'] as Nutrient[]) {
			f[fieldName.mean(p.practice_code, k)] = pct(p[k]?.mean);
			f[fieldName.sd(p.practice_code, k)] = pct(p[k]?.sd);
			f[fieldName.applies(p.practice_code, k)] = p[k]?.applies_to ?? (k === 'p' ? 'load' : 'concentration');
		}
		f[fieldName.lifespan(p.practice_code)] = String(p.lifespan_years);
	}
	return f;
}

export function formDataToFields(fd: FormData): FormFields {
	const out: FormFields = {};
	for (const [k, v] of fd.entries()) if (typeof v === 'string') out[k] = v;
	return out;
}

type Parsed = { ok: true; method: ReductionMethod } | { ok: false; errors: FieldErrors };

/** Builds the new method from the base and the submitted fields; every problem is tied to a field. */
export function fieldsToMethod(base: ReductionMethod, f: FormFields): Parsed {
	const errors: FieldErrors = {};
	const get = (k: string) => (f[k] ?? '').trim();
	const num = (k: string, opts: { blank?: 'null' } = {}): number | null | undefined => {
		const s = get(k);
		if (s === '') {
			if (opts.blank === 'null') return null;
			errors[k] = 'Enter a number.';
			return undefined;
		}
		const n = Number(s);
		if (!Number.isFinite(n)) {
			errors[k] = 'Enter a number (use a dot for decimals).';
			return undefined;
		}
		return n;
	};
	const frac = (k: string, opts: { blank?: 'null' } = {}) => {
		const n = num(k, opts);
		return n === null || n === undefined ? n : Number((n / 100).toFixed(6));
	};

	const yearText = get('cite_year');
	const citeYear = yearText === '' ? null : Number(yearText);
	if (yearText !== '' && !(Number.isInteger(citeYear) && citeYear! >= 1800 && citeYear! <= 2200))
		errors.cite_year = 'A four-digit year, or leave it blank.';
	const changeCitation: Citation = {
		title: get('cite_title'),
		publisher: get('cite_publisher'),
		year: Number.isInteger(citeYear) ? citeYear : null,
		section: get('cite_section') || null,
		recalled: f.cite_recalled === 'on' || f.cite_recalled === 'true'
	};
	let changed = false;
	const cite = (same: boolean, old: Citation): Citation => {
		if (same) return old;
		changed = true;
		return changeCitation;
	};

	const practices = base.practices.map((p) => {
		const next = { ...p };
		for (const k of ['n', 'p'] as Nutrient[]) {
			const mean = frac(fieldName.mean(p.practice_code, k), { blank: 'null' });
			const sd = frac(fieldName.sd(p.practice_code, k), { blank: 'null' });
			const appliesRaw = get(fieldName.applies(p.practice_code, k));
			const applies = appliesRaw === 'load' || appliesRaw === 'concentration' ? appliesRaw : (p[k]?.applies_to ?? 'load');
			if (mean === undefined || sd === undefined) continue;
			if (mean === null) {
				if (sd !== null) errors[fieldName.sd(p.practice_code, k)] = 'A spread needs a mean; clear both to credit nothing.';
				// Removing a credit attaches no value, so it needs no source.
				next[k] = null;
				continue;
			}
			const old = p[k];
			const same = !!old && old.mean === mean && old.sd === sd && old.applies_to === applies;
			const value: EfficiencyValue = { mean, sd, applies_to: applies, citation: cite(same, old?.citation ?? changeCitation) };
			next[k] = same ? old : value;
		}
		const life = num(fieldName.lifespan(p.practice_code));
		if (life !== undefined && life !== null) {
			next.lifespan_years = life;
			next.lifespan_citation = cite(life === p.lifespan_years, p.lifespan_citation);
		}
		return next;
	});

	const bn = num('baseline_n');
	const bp = num('baseline_p');
	const sw = base.baseline.statewide;
	const statewide =
		bn === undefined || bn === null || bp === undefined || bp === null
			? sw
			: { n_lb_per_ac_yr: bn, p_lb_per_ac_yr: bp, citation: cite(bn === sw.n_lb_per_ac_yr && bp === sw.p_lb_per_ac_yr, sw.citation) };

	const counties: CountyBaseline[] = [];
	get('counties')
		.split(/\r?\n/)
		.map((l) => l.trim())
		.filter(Boolean)
		.forEach((line, i) => {
			const m = /^(\d{5})\s*[,;\t ]\s*([0-9.]+)\s*[,;\t ]\s*([0-9.]+)$/.exec(line);
			if (!m) {
				errors.counties ??= `Line ${i + 1}: write "FIPS, lb N, lb P", e.g. 19169, 22, 1.1.`;
				return;
			}
			const [fips, n, p] = [m[1], Number(m[2]), Number(m[3])];
			const old = base.baseline.counties.find((c) => c.county_fips === fips);
			const same = !!old && old.n_lb_per_ac_yr === n && old.p_lb_per_ac_yr === p;
			counties.push({ county_fips: fips, n_lb_per_ac_yr: n, p_lb_per_ac_yr: p, citation: cite(same, old?.citation ?? changeCitation) });
		});

	const b = base.bioreactor;
	const minH = num('min_retention_hours');
	const share = frac('design_share_pct');
	const por = num('default_porosity');
	const bioreactor = {
		...b,
		...(minH !== undefined && minH !== null
			? { min_retention_hours: minH, min_retention_citation: cite(minH === b.min_retention_hours, b.min_retention_citation) }
			: {}),
		...(share !== undefined && share !== null
			? { design_share_of_peak: share, design_share_citation: cite(share === b.design_share_of_peak, b.design_share_citation) }
			: {}),
		...(por !== undefined && por !== null
			? { default_porosity: por, porosity_citation: cite(por === b.default_porosity, b.porosity_citation) }
			: {})
	};

	const notes = get('notes')
		.split(/\r?\n/)
		.map((l) => l.trim())
		.filter(Boolean);

	if (!get('version')) errors.version = 'Give the new version a name, e.g. ia-2017.2.';
	else if (get('version') === base.version) errors.version = 'A new version needs a new name; stored versions never change.';
	if (!get('label')) errors.label = 'Give the version a label people will recognise.';
	if (changed && (!changeCitation.title || !changeCitation.publisher)) {
		errors.cite_title = 'Name the published source (title and publisher) of the values you changed.';
	}
	if (Object.keys(errors).length > 0) return { ok: false, errors };

	const method: ReductionMethod = {
		version: get('version'),
		label: get('label'),
		description: get('description'),
		practices,
		baseline: { statewide, counties },
		bioreactor,
		notes
	};
	const parsed = ReductionMethodSchema.safeParse(method);
	if (!parsed.success) {
		for (const issue of parsed.error.issues) {
			const key = issuePathToField(method, issue.path);
			errors[key] ??= issue.message;
		}
		return { ok: false, errors };
	}
	return { ok: true, method: parsed.data };
}

/** Maps a schema issue path to the form field that holds the value. */
export function issuePathToField(m: ReductionMethod, path: readonly PropertyKey[]): string {
	const [a, b, c, d] = path;
	if (a === 'practices' && typeof b === 'number') {
		const code = m.practices[b]?.practice_code ?? '';
		if ((c === 'n' || c === 'p') && d === 'sd') return fieldName.sd(code, c);
		if (c === 'n' || c === 'p') return d === 'citation' ? 'cite_title' : fieldName.mean(code, c);
		if (c === 'lifespan_years') return fieldName.lifespan(code);
		if (c === 'lifespan_citation') return 'cite_title';
	}
	if (a === 'baseline') {
		if (b === 'counties') return 'counties';
		if (c === 'n_lb_per_ac_yr') return 'baseline_n';
		if (c === 'p_lb_per_ac_yr') return 'baseline_p';
		return 'cite_title';
	}
	if (a === 'bioreactor') {
		if (b === 'min_retention_hours') return 'min_retention_hours';
		if (b === 'design_share_of_peak') return 'design_share_pct';
		if (b === 'default_porosity') return 'default_porosity';
		return 'cite_title';
	}
	if (a === 'version' || a === 'label' || a === 'description' || a === 'notes') return String(a);
	return 'form';
}
