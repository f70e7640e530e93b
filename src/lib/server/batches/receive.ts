// Receives an upload body as a stream: written to a temporary file while its SHA-256 and size are
// computed, never held whole in memory, and cut off with a 413 problem past the size limit.
import { createHash, randomUUID } from 'node:crypto';
import { createWriteStream, mkdirSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { once } from 'node:events';
import { ApiError } from '../http/problem';

export interface ReceivedFile {
	file: string;
	size: number;
	sha256: string;
	/** Removes the temporary file. */
	discard: () => void;
}

function tooLarge(limit: number): ApiError {
	const mb = Math.round((limit / (1024 * 1024)) * 100) / 100;
	return new ApiError({
		status: 413,
		type: 'upload-too-large',
		detail: `The file is larger than the ${mb} MB limit of this hub. Split it into several files, or ask the administrator to raise MAX_UPLOAD_MB.`,
		extra: { limit_bytes: limit }
	});
}

function uploadDir(): string {
	const dir = process.env.UPLOAD_TMP_DIR ?? path.join(os.tmpdir(), 'runnel-uploads');
	mkdirSync(dir, { recursive: true });
	return dir;
}

/** Streams `body` to a temporary file. `declaredLength` (Content-Length) is checked before reading. */
export async function receiveToTempFile(
	body: ReadableStream<Uint8Array> | AsyncIterable<Uint8Array> | null,
	limit: number,
	declaredLength?: number | null
): Promise<ReceivedFile> {
	if (declaredLength != null && Number.isFinite(declaredLength) && declaredLength > limit) throw tooLarge(limit);
	const file = path.join(uploadDir(), `${randomUUID()}.upload`);
	const discard = () => rmSync(file, { force: true });
	const hash = createHash('sha256');
	const out = createWriteStream(file);
	let size = 0;
	try {
		if (body) {
			// Web streams are read through their reader (not their async iterator, which would cancel the
			// request and reset the connection when we stop early).
			const iterable: AsyncIterable<Uint8Array> =
				'getReader' in body ? streamIterable(body as ReadableStream<Uint8Array>) : (body as AsyncIterable<Uint8Array>);
			for await (const chunk of iterable) {
				size += chunk.byteLength;
				if (size > limit) throw tooLarge(limit);
				hash.update(chunk);
				if (!out.write(chunk)) await once(out, 'drain');
			}
		}
		out.end();
		await once(out, 'finish');
		return { file, size, sha256: hash.digest('hex'), discard };
	} catch (e) {
		out.destroy();
		discard();
		throw e;
	}
}

async function* streamIterable(stream: ReadableStream<Uint8Array>): AsyncGenerator<Uint8Array> {
	const reader = stream.getReader();
	try {
		for (;;) {
			const { done, value } = await reader.read();
			if (done) return;
			if (value) yield value;
		}
	} finally {
		// Stop reading without destroying the connection, so a 413 answer still reaches the client.
		reader.releaseLock();
	}
}
