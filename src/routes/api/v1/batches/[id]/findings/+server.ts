// GET the findings of a batch: JSON in cursor pages, or all of them as CSV (`Accept: text/csv` or
// `?format=csv`), optionally filtered by severity, code and column.
import { batchForPrincipal, findingsCsvStream, listFindings } from '$lib/server/batches/queries';
import { pageLimit, pageResponse } from '$lib/server/http/cursor';
import { enumParam, patternParam } from '$lib/server/http/query';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ params, url, request, locals }) => {
	const batch = await batchForPrincipal(locals.principal!, params.id);
	const filters = {
		severity: enumParam(url, 'severity', ['error', 'warning'] as const),
		code: patternParam(url, 'code', /^[a-z0-9-]{1,64}$/, 'a finding code'),
		column: patternParam(url, 'column', /^[A-Za-z0-9_ .-]{1,100}$/, 'a column name')
	};
	const format = enumParam(url, 'format', ['json', 'csv'] as const);
	const wantsCsv = format === 'csv' || (format === null && /\btext\/csv\b/.test(request.headers.get('accept') ?? ''));
	if (wantsCsv) {
		const name = `batch-${batch.id}-findings.csv`;
		return new Response(findingsCsvStream(batch.id, filters), {
			headers: { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': `attachment; filename="${name}"` }
		});
	}
	return pageResponse(await listFindings(batch.id, url, filters, pageLimit(url, 100, 1000)));
};
