import { error, fail } from '@sveltejs/kit';
import { screenBioreactor } from '$lib/domain/bioreactor-screening';
import { estimateFieldGroup, estimateRecord } from '$lib/domain/estimate';
import { PRACTICE_CATALOG } from '$lib/domain/practice-catalog';
import { actorOf } from '$lib/server/auth/principal';
import { getDb } from '$lib/server/db';
import { ApiError } from '$lib/server/http/problem';
import { getMethod, listMethods, setActiveMethod } from '$lib/server/methods';
import type { Actions, PageServerLoad } from './$types';

// A worked example shown with every method: one fictional 50-acre tile-drained field with a bioreactor
// and a cereal-rye cover crop (stacked), and the bed screened. Invented numbers, for illustration only.
const EXAMPLE_FIELD = [
	{ id: 'example-605', practice_code: '605', county_fips: '19169', district_id: 0, field_id: 'example', drainage_area_acres: 50 },
	{ id: 'example-340', practice_code: '340', county_fips: '19169', district_id: 0, field_id: 'example', extent_acres: 50 }
];
const EXAMPLE_BED = {
	practice_code: '605',
	drainage_area_acres: 50,
	drainage_coefficient_in_per_day: 0.5,
	bed_length_ft: 100,
	bed_width_ft: 10,
	bed_depth_ft: 2,
	main_diameter_in: 8,
	main_slope_pct: 0.1
};

export const load = (async ({ url, locals }) => {
	const db = getDb();
	const methods = await listMethods(db);
	const active = methods.find((m) => m.active)?.version ?? null;
	const version = url.searchParams.get('version') ?? active;
	const selected = version ? await getMethod(db, version) : undefined;
	if (!selected) error(404, version ? `No reduction method has version ${version}.` : 'No reduction method is stored yet.');
	const method = selected.method;
	return {
		methods: methods.map((m) => ({ ...m, created_at: m.created_at.toISOString() })),
		selected: {
			version: selected.version,
			label: selected.label,
			active: selected.active,
			created_by: selected.created_by,
			created_at: selected.created_at.toISOString()
		},
		method,
		practiceNames: Object.fromEntries(PRACTICE_CATALOG.map((p) => [p.code, p.name])),
		example: {
			alone: estimateRecord({ ...EXAMPLE_FIELD[0], field_id: null }, method),
			stacked: estimateFieldGroup(EXAMPLE_FIELD, method),
			screening: screenBioreactor(EXAMPLE_BED, method)
		},
		isAdmin: locals.principal?.role === 'admin'
	};
}) satisfies PageServerLoad;

export const actions = {
	activate: async ({ request, locals }) => {
		const version = String((await request.formData()).get('version') ?? '');
		try {
			const change = await setActiveMethod(getDb(), version, actorOf(locals.principal!));
			return { activated: change.to };
		} catch (e) {
			if (e instanceof ApiError)
				return fail(e.init.status, { activateError: e.init.detail ?? 'Could not change the active method.', version });
			throw e;
		}
	}
} satisfies Actions;
