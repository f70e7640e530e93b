// Reads a small request body as text with a hard size limit (413 problem past it), for JSON endpoints.
// Large uploads are streamed elsewhere; with BODY_SIZE_LIMIT=Infinity every endpoint enforces its own.
import { ApiError } from './problem';

export async function readSmallBody(request: Request, limit: number): Promise<string> {
	const tooLarge = () => new ApiError({ status: 413, type: 'body-too-large', detail: `The body is larger than ${limit} bytes.` });
	const declared = Number(request.headers.get('content-length'));
	if (Number.isFinite(declared) && declared > limit) throw tooLarge();
	if (!request.body) return '';
	const reader = request.body.getReader();
	const chunks: Uint8Array[] = [];
	let size = 0;
	try {
		for (;;) {
			const { done, value } = await reader.read();
			if (done) break;
			size += value.byteLength;
			if (size > limit) throw tooLarge();
			chunks.push(value);
		}
	} finally {
		reader.releaseLock();
	}
	return Buffer.concat(chunks).toString('utf8');
}
