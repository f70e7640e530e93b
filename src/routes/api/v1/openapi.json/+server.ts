import { json } from '@sveltejs/kit';
import { buildOpenApiDocument } from '$lib/schema/openapi';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = () => json(buildOpenApiDocument(), { headers: { 'cache-control': 'public, max-age=300' } });
