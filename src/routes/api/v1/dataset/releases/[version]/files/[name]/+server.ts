// GET /api/v1/dataset/releases/{version}/files/{name} — one release file, streamed from object storage.
import { Readable } from 'node:stream';
import { getDb } from '$lib/server/db';
import { ApiError } from '$lib/server/http/problem';
import { getRelease, objectKey, RELEASE_FILES } from '$lib/server/dataset/release';
import { getObjectStore } from '$lib/server/storage/object-store';
import type { RequestHandler } from './$types';

const EXTRA: Record<string, string> = { 'manifest.json': 'application/json', 'manifest.jws': 'application/jose' };

export const GET: RequestHandler = async ({ params }) => {
	const r = await getRelease(getDb(), params.version);
	const file = (r.manifest.files as { name: string; media_type: string; bytes: number }[]).find((f) => f.name === params.name);
	if (!file && !EXTRA[params.name]) {
		throw new ApiError({
			status: 404,
			type: 'not-found',
			detail: `Release ${r.version} has no file ${params.name}; its files: ${[...RELEASE_FILES, ...Object.keys(EXTRA)].join(', ')}.`
		});
	}
	const body = await (await getObjectStore()).get(objectKey(r.version, params.name));
	const headers: Record<string, string> = {
		'content-type': file?.media_type ?? EXTRA[params.name],
		'content-disposition': `attachment; filename="runnel-dataset-${r.version}-${params.name}"`,
		'cache-control': 'private, max-age=86400, immutable'
	};
	if (file) headers['content-length'] = String(file.bytes);
	if (r.status === 'withdrawn') headers['warning'] = `299 - "release withdrawn: ${r.withdrawn_reason?.replace(/["\\\r\n]/g, ' ')}"`;
	return new Response(Readable.toWeb(body) as ReadableStream, { headers });
};
