// POST: create a batch from a raw body (CSV, XLSX, NDJSON or a JSON array); 202 + Location.
// GET: the batches the caller may see, newest first, with filters and cursor pages.
import { BATCH_MODES, BATCH_STATUSES, BATCH_TYPES, BatchMode } from '$lib/schema/batch';
import { createBatch } from '$lib/server/batches/create';
import { uploadFormatOf } from '$lib/server/batches/intake-schema';
import { listBatches } from '$lib/server/batches/queries';
import { pageLimit, pageResponse } from '$lib/server/http/cursor';
import { ApiError } from '$lib/server/http/problem';
import { enumParam, patternParam } from '$lib/server/http/query';
import type { RequestHandler } from './$types';

/** `attachment; filename="x.csv"` or `filename*=UTF-8''x.csv` → the bare file name (no folders). */
function fileNameFrom(header: string | null): string | null {
	if (!header) return null;
	const star = /filename\*\s*=\s*(?:UTF-8|utf-8)''([^;]+)/.exec(header);
	let name: string | null = null;
	if (star) {
		try {
			name = decodeURIComponent(star[1].trim());
		} catch {
			name = null;
		}
	}
	name ??= /filename\s*=\s*"((?:[^"\\]|\\.)*)"/.exec(header)?.[1] ?? /filename\s*=\s*([^;\s]+)/.exec(header)?.[1] ?? null;
	if (!name) return null;
	// No folders, no control characters.
	const base = [...name.split(/[\\/]/).pop()!]
		.filter((ch) => ch.charCodeAt(0) >= 0x20 && ch.charCodeAt(0) !== 0x7f)
		.join('')
		.trim();
	return base.slice(0, 255) || null;
}

export const POST: RequestHandler = async ({ request, url, locals }) => {
	const mode = enumParam(url, 'mode', BATCH_MODES) ?? 'check';
	BatchMode.parse(mode);
	const recordType = enumParam(url, 'type', BATCH_TYPES) ?? 'records';
	const sheet = url.searchParams.get('sheet') || null;
	if (sheet !== null && sheet.length > 100)
		throw new ApiError({ status: 400, type: 'invalid-parameter', detail: 'sheet names are at most 100 characters.' });
	const contentType = request.headers.get('content-type');
	const fileName = fileNameFrom(request.headers.get('content-disposition'));
	const format = uploadFormatOf(contentType, fileName);
	const lengthHeader = request.headers.get('content-length');
	const answer = await createBatch(locals.principal!, {
		mode,
		recordType,
		format,
		contentType: (contentType ?? '').trim().slice(0, 200),
		districtCode: patternParam(url, 'district', /^[A-Za-z0-9_-]{1,32}$/, 'a district code'),
		sheet,
		fileName,
		idempotencyKey: request.headers.get('idempotency-key'),
		contentLength: lengthHeader ? Number(lengthHeader) : null,
		body: request.body
	});
	const headers: Record<string, string> = { 'content-type': 'application/json', location: answer.location };
	if (answer.replayed) headers['idempotent-replayed'] = 'true';
	return new Response(JSON.stringify(answer.body), { status: answer.status, headers });
};

export const GET: RequestHandler = async ({ url, locals }) => {
	const page = await listBatches(
		locals.principal!,
		url,
		{
			district: patternParam(url, 'district', /^[A-Za-z0-9_-]{1,32}$/, 'a district code'),
			status: enumParam(url, 'status', BATCH_STATUSES),
			mode: enumParam(url, 'mode', BATCH_MODES),
			type: enumParam(url, 'type', BATCH_TYPES)
		},
		pageLimit(url, 50, 200)
	);
	return pageResponse(page);
};
