import { error } from '@sveltejs/kit';
import { APP_VERSION } from '$lib/version';
import { config } from '$lib/server/config';
import type { LayoutServerLoad } from './$types';

export const load = (async ({ locals }) => {
	if (locals.forbidden) error(403, 'Your role does not give access to this page.');
	const p = locals.principal;
	return {
		version: APP_VERSION,
		timeZone: config.timeZone,
		user: p ? { name: p.name, email: p.email, role: p.role, districtId: p.districtId } : null
	};
}) satisfies LayoutServerLoad;
