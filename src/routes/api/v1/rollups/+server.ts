// GET /api/v1/rollups — totals by county / HUC-8 / district × FY × practice, as JSON, CSV or XLSX.
import { json } from '@sveltejs/kit';
import { getDb } from '$lib/server/db';
import { ApiError } from '$lib/server/http/problem';
import { csvStream, exportFileName, xlsxStream, XLSX_TYPE } from '$lib/server/rollups/export';
import { runRollup } from '$lib/server/rollups/query';
import { parseRollupQuery } from '$lib/schema/rollups';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ url, locals }) => {
	const parsed = parseRollupQuery(url.searchParams);
	if (!parsed.ok)
		throw new ApiError({ status: 400, type: 'invalid-query', detail: 'The query parameters are not valid.', errors: parsed.errors });
	const principal = locals.principal!;
	const outcome = await runRollup(getDb(), principal, parsed.query);
	if (outcome.kind === 'pending') {
		return json(outcome.pending, { status: 202, headers: { 'retry-after': '2', 'cache-control': 'no-store' } });
	}
	const researcher = principal.role === 'researcher';
	const headers = { 'cache-control': 'private, no-store' };
	switch (parsed.query.format) {
		case 'csv': {
			const response = outcome.answer.response();
			return new Response(csvStream(response, researcher), {
				headers: {
					...headers,
					'content-type': 'text/csv; charset=utf-8',
					'content-disposition': `attachment; filename="${exportFileName(response, 'csv')}"`
				}
			});
		}
		case 'xlsx': {
			const response = outcome.answer.response();
			return new Response(xlsxStream(response, outcome.method, researcher), {
				headers: {
					...headers,
					'content-type': XLSX_TYPE,
					'content-disposition': `attachment; filename="${exportFileName(response, 'xlsx')}"`
				}
			});
		}
		default: {
			// Encoded once, with its length (SvelteKit's json() helper would encode the text twice: once to count it).
			const body = Buffer.from(outcome.answer.json(), 'utf8');
			return new Response(body, {
				headers: { ...headers, 'content-type': 'application/json', 'content-length': String(body.byteLength) }
			});
		}
	}
};
