// Reads and validates a JSON request body for /api/v1 routes: 415 for another media type, 400 for
// malformed JSON, 422 with one `errors[]` entry per zod issue (JSON Pointer to the member).
import type { z } from 'zod';
import { ApiError } from './problem';

const MAX_JSON_BYTES = 64 * 1024;

export function issuesToErrors(error: z.ZodError): Array<{ pointer: string; detail: string }> {
	return error.issues.map((i) => ({
		pointer: '/' + i.path.map((p) => String(p).replace(/~/g, '~0').replace(/\//g, '~1')).join('/'),
		detail: i.message
	}));
}

export async function readJson<S extends z.ZodType>(request: Request, schema: S): Promise<z.output<S>> {
	const type = (request.headers.get('content-type') ?? '').split(';')[0].trim().toLowerCase();
	if (type !== 'application/json')
		throw new ApiError({ status: 415, detail: 'Send the body as application/json.', headers: { 'accept-post': 'application/json' } });
	const text = await request.text();
	if (text.length > MAX_JSON_BYTES) throw new ApiError({ status: 413, detail: `A JSON body here may be at most ${MAX_JSON_BYTES} bytes.` });
	let body: unknown;
	try {
		body = JSON.parse(text);
	} catch {
		throw new ApiError({ status: 400, type: 'malformed-json', detail: 'The body is not valid JSON.' });
	}
	const parsed = schema.safeParse(body);
	if (!parsed.success)
		throw new ApiError({ status: 422, type: 'validation', detail: 'The body has invalid fields.', errors: issuesToErrors(parsed.error) });
	return parsed.data;
}
