import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ locals }) => {
	const p = locals.principal!;
	return json({
		kind: p.kind,
		user_id: p.userId,
		email: p.email,
		name: p.name,
		role: p.role,
		district_id: p.districtId,
		scopes: p.scopes,
		expires_at: p.expiresAt?.toISOString() ?? null
	});
};
