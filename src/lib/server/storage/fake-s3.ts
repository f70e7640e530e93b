// A local fake S3 server (s3rver) for development and tests, used when S3_URL is not set.
// It listens on 127.0.0.1 only and keeps its objects in a folder (`.data/s3` under `npm start`).
import { mkdirSync } from 'node:fs';

/** Credentials s3rver accepts; they protect nothing (loopback only) and are not secrets. */
export const FAKE_S3_CREDENTIALS = { accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER' } as const;

export interface FakeS3 {
	url: string;
	port: number;
	close: () => Promise<void>;
}

export async function startFakeS3(opts: { dir: string; port: number; bucket: string }): Promise<FakeS3> {
	mkdirSync(opts.dir, { recursive: true });
	// Loaded only when needed: a hub with a real bucket never loads the fake.
	const { default: S3rver } = await import('s3rver');
	const server = new S3rver({
		address: '127.0.0.1',
		port: opts.port,
		silent: true,
		directory: opts.dir,
		vhostBuckets: false,
		configureBuckets: [{ name: opts.bucket }]
	});
	const addr = await server.run();
	let closed = false;
	return {
		url: `http://127.0.0.1:${addr.port}`,
		port: addr.port,
		close: async () => {
			if (closed) return;
			closed = true;
			await server.close();
		}
	};
}
