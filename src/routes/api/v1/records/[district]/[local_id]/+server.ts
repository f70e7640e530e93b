// PUT one practice record by district code and local_id (API clients that send one record at a time):
// the same checks, versioning and change hook as a batch row. 201 created, 200 updated or unchanged,
// 422 with the findings when the record has errors.
import { json } from '@sveltejs/kit';
import { readSmallBody } from '$lib/server/http/body';
import { ApiError } from '$lib/server/http/problem';
import { putRecord } from '$lib/server/records/write-one';
import type { RequestHandler } from './$types';

const MAX_RECORD_BYTES = 64 * 1024;

export const PUT: RequestHandler = async ({ params, request, locals }) => {
	if (!/^application\/json\b/i.test(request.headers.get('content-type') ?? ''))
		throw new ApiError({ status: 415, type: 'unsupported-media-type', detail: 'Send the record as application/json.' });
	const text = await readSmallBody(request, MAX_RECORD_BYTES);
	let body: unknown;
	try {
		body = JSON.parse(text);
	} catch {
		throw new ApiError({ status: 400, type: 'invalid-json', detail: 'The body is not valid JSON.' });
	}
	const r = await putRecord(locals.principal!, params.district, params.local_id, body);
	return json({ outcome: r.outcome, record: r.record, findings: r.findings }, { status: r.status });
};
