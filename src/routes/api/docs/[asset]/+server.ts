import { ApiError } from '$lib/server/http/problem';
import { swaggerAsset } from '$lib/server/api-docs/swagger';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ params }) => {
	const asset = await swaggerAsset(params.asset);
	if (!asset) throw new ApiError({ status: 404, detail: `No API documentation file named ${params.asset}.` });
	const body = typeof asset.body === 'string' ? asset.body : new Uint8Array(asset.body);
	return new Response(body, { headers: { 'content-type': asset.type, 'cache-control': 'public, max-age=86400' } });
};
