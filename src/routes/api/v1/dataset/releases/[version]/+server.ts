// GET /api/v1/dataset/releases/{version} — status, notes, the manifest and its compact JWS.
import { json } from '@sveltejs/kit';
import { getDb } from '$lib/server/db';
import { getRelease } from '$lib/server/dataset/release';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ params }) => {
	const r = await getRelease(getDb(), params.version);
	return json(
		{
			version: r.version,
			status: r.status,
			notes: r.notes,
			published_at: r.published_at,
			withdrawn_reason: r.withdrawn_reason,
			withdrawn_at: r.withdrawn_at,
			manifest: r.manifest,
			manifest_jws: r.manifest_jws,
			files: (r.manifest.files as { name: string }[]).map((f) => ({ ...f, href: `/api/v1/dataset/releases/${r.version}/files/${f.name}` })),
			jwks: '/.well-known/jwks.json'
		},
		{ headers: { 'cache-control': 'no-store' } }
	);
};
