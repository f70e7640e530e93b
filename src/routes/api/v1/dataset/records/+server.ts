// GET /api/v1/dataset/records — the live anonymised research dataset: JSON cursor pages, or the whole
// filtered dataset streamed as CSV / NDJSON. Scope `dataset:read`; rate-limited per token.
import { getDb } from '$lib/server/db';
import {
	datasetContext,
	datasetCsvStream,
	datasetNdjsonStream,
	datasetPage,
	kyselyExec,
	prepare,
	type DatasetFilter
} from '$lib/server/dataset/source';
import { CSV_TYPE, NDJSON_TYPE } from '$lib/server/dataset/encode';
import { takeRateLimit } from '$lib/server/dataset/rate-limit';
import { decodeCursor, encodeCursor, nextLink, pageLimit } from '$lib/server/http/cursor';
import { ApiError } from '$lib/server/http/problem';
import { DatasetQuery } from '$lib/schema/dataset';
import { z } from 'zod';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ url, locals, request }) => {
	const limits = takeRateLimit(locals.principal!.credentialId);
	const parsed = DatasetQuery.safeParse(Object.fromEntries(url.searchParams));
	if (!parsed.success) {
		throw new ApiError({
			status: 400,
			type: 'invalid-query',
			detail: 'The query parameters are not valid.',
			errors: parsed.error.issues.map((i) => ({ pointer: `#/query/${i.path.join('/')}`, detail: i.message })),
			headers: limits
		});
	}
	const q = parsed.data;
	const accept = request.headers.get('accept') ?? '';
	const format = q.format ?? (accept.includes('text/csv') ? 'csv' : accept.includes('application/x-ndjson') ? 'ndjson' : 'json');
	const filter: DatasetFilter = { fy: q.fy?.from ?? null, fyTo: q.fy?.to ?? null, practice: q.practice ?? null, county: q.county ?? null };
	const db = getDb();
	const ctx = await datasetContext(db);
	const headers = { ...limits, 'cache-control': 'private, no-store', 'x-method-version': ctx.methodVersion };
	if (format === 'csv' || format === 'ndjson') {
		const stream = format === 'csv' ? await datasetCsvStream(ctx, filter) : await datasetNdjsonStream(ctx, filter);
		return new Response(stream, {
			headers: {
				...headers,
				'content-type': format === 'csv' ? CSV_TYPE : NDJSON_TYPE,
				'content-disposition': `attachment; filename="runnel-dataset-live.${format}"`
			}
		});
	}
	const limit = pageLimit(url, 100, 1000);
	const after = decodeCursor(url.searchParams.get('cursor'), z.object({ after: z.string().regex(/^\d+$/) }))?.after ?? null;
	const page = await db.transaction().execute(async (trx) => {
		await prepare(kyselyExec(trx), ctx);
		return datasetPage(kyselyExec(trx), ctx, filter, after, limit);
	});
	const next = page.last ? nextLink(url, encodeCursor({ after: page.last })) : null;
	const body = { data: page.rows, next, method_version: ctx.methodVersion, small_cells: ctx.counts };
	const h: Record<string, string> = { ...headers, 'content-type': 'application/json' };
	if (next) h.link = `<${next}>; rel="next"`;
	return new Response(JSON.stringify(body), { headers: h });
};
