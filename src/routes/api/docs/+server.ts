import { API_DOCS_HTML } from '$lib/server/api-docs/swagger';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = () =>
	new Response(API_DOCS_HTML, { headers: { 'content-type': 'text/html; charset=utf-8', 'cache-control': 'no-cache' } });
