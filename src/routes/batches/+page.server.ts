import { listBatches } from '$lib/server/batches/queries';
import { getDb } from '$lib/server/db';
import type { PageServerLoad } from './$types';

export const load = (async ({ locals, url }) => {
	const p = locals.principal!;
	const history = await listBatches(p, new URL('/api/v1/batches', url), { district: null, status: null, mode: null }, 20);
	const canUpload = p.scopes.includes('records:write') && (p.role === 'district' || p.role === 'admin');
	const districts =
		p.role === 'admin'
			? await getDb().selectFrom('districts').select(['code', 'name']).orderBy('name').execute()
			: p.districtId !== null
				? await getDb().selectFrom('districts').select(['code', 'name']).where('id', '=', p.districtId).execute()
				: [];
	return { history, canUpload, districts, maxUploadMb: Number(process.env.MAX_UPLOAD_MB ?? 50) };
}) satisfies PageServerLoad;
