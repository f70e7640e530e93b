// GET /api/v1/dataset/records — the live anonymised research dataset: JSON cursor pages, or the whole
// filtered dataset streamed as CSV / NDJSON. Scope `dataset:read`; rate-limited per token.
import { getDb } from '$lib/server/db';
import { datasetContext, datasetRows, publish, sourceBatch, type DatasetFilter } from '$lib/server/dataset/source';
import { CSV_TYPE, encodeRows, NDJSON_TYPE, toWebStream } from '$lib/server/dataset/encode';
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
		const stream = toWebStream(encodeRows(datasetRows(db, ctx, filter), format));
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
	// Fetch source rows until the page is full (suppressed rows are skipped), keeping the last id read.
	const data = [];
	let last = after;
	let exhausted = false;
	while (data.length < limit && !exhausted) {
		const batch = await sourceBatch(db, ctx, filter, last, limit - data.length);
		if (batch.length < limit - data.length) exhausted = true;
		for (const s of batch) {
			last = s.record_id;
			const row = publish(ctx, s, filter);
			if (row) data.push(row);
		}
		if (batch.length === 0) exhausted = true;
	}
	const next = exhausted ? null : nextLink(url, encodeCursor({ after: last }));
	const body = { data, next, method_version: ctx.methodVersion, small_cells: ctx.counts };
	const h: Record<string, string> = { ...headers, 'content-type': 'application/json' };
	if (next) h.link = `<${next}>; rel="next"`;
	return new Response(JSON.stringify(body), { headers: h });
};
