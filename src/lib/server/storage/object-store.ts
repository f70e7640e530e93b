// Object storage through the S3 API (@aws-sdk/client-s3). `S3_URL` + credentials + `S3_BUCKET` point at a
// real bucket (any S3-compatible store); without S3_URL a local fake S3 server (s3rver) is started on
// 127.0.0.1 (or reused when another Runnel process on this machine already runs it).
import { createReadStream, statSync } from 'node:fs';
import type { Readable } from 'node:stream';
import {
	CreateBucketCommand,
	DeleteObjectCommand,
	GetObjectCommand,
	HeadBucketCommand,
	PutObjectCommand,
	S3Client,
	type S3ClientConfig
} from '@aws-sdk/client-s3';
import { config } from '../config';
import { logger } from '../log';
import { FAKE_S3_CREDENTIALS, startFakeS3, type FakeS3 } from './fake-s3';

// The pinned SDK supports Node 20; its notice about future releases needing Node 22 is not for operators.
process.env.AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED ??= 'true';

export interface ObjectStore {
	/** Where the objects live, for logs and the README (no credentials). */
	readonly description: string;
	/** Uploads a local file as one object (streamed from disk, known length). */
	putFile(key: string, file: string, contentType: string): Promise<void>;
	/** Streams an object back. */
	get(key: string): Promise<Readable>;
	delete(key: string): Promise<void>;
}

class S3ObjectStore implements ObjectStore {
	constructor(
		private readonly client: S3Client,
		private readonly bucket: string,
		readonly description: string
	) {}

	async putFile(key: string, file: string, contentType: string): Promise<void> {
		const size = statSync(file).size;
		await this.client.send(
			new PutObjectCommand({ Bucket: this.bucket, Key: key, Body: createReadStream(file), ContentLength: size, ContentType: contentType })
		);
	}

	async get(key: string): Promise<Readable> {
		const out = await this.client.send(new GetObjectCommand({ Bucket: this.bucket, Key: key }));
		if (!out.Body) throw new Error(`object ${key} has no body`);
		return out.Body as Readable;
	}

	async delete(key: string): Promise<void> {
		await this.client.send(new DeleteObjectCommand({ Bucket: this.bucket, Key: key }));
	}

	async ensureBucket(): Promise<void> {
		try {
			await this.client.send(new HeadBucketCommand({ Bucket: this.bucket }));
		} catch (e) {
			const status = (e as { $metadata?: { httpStatusCode?: number } }).$metadata?.httpStatusCode;
			if (status !== 404) throw e;
			await this.client.send(new CreateBucketCommand({ Bucket: this.bucket }));
		}
	}
}

function s3Client(endpoint: string, credentials: { accessKeyId: string; secretAccessKey: string } | undefined): S3Client {
	const s3 = config.s3;
	const options: S3ClientConfig = {
		endpoint,
		region: s3.region,
		forcePathStyle: s3.forcePathStyle,
		credentials,
		// Checksums only where S3 requires them: trailing-checksum uploads are not understood by every
		// S3-compatible store (the local fake among them).
		requestChecksumCalculation: 'WHEN_REQUIRED',
		responseChecksumValidation: 'WHEN_REQUIRED'
	};
	return new S3Client(options);
}

let storePromise: Promise<ObjectStore> | undefined;
let fake: FakeS3 | undefined;

/** The process's object store, created on first use (starting the local fake when S3_URL is unset). */
export function getObjectStore(): Promise<ObjectStore> {
	storePromise ??= createStore().catch((e) => {
		storePromise = undefined;
		throw e;
	});
	return storePromise;
}

async function createStore(): Promise<ObjectStore> {
	const s3 = config.s3;
	if (s3.url) {
		const credentials =
			s3.accessKeyId && s3.secretAccessKey ? { accessKeyId: s3.accessKeyId, secretAccessKey: s3.secretAccessKey } : undefined;
		const store = new S3ObjectStore(s3Client(s3.url, credentials), s3.bucket, `${new URL(s3.url).host}/${s3.bucket}`);
		await store.ensureBucket();
		return store;
	}
	const { port, dir } = config.fakeS3;
	let url = `http://127.0.0.1:${port}`;
	try {
		fake = await startFakeS3({ dir, port, bucket: s3.bucket });
		url = fake.url;
		logger.info({ url, dir }, 'local fake S3 server started');
	} catch (e) {
		if ((e as NodeJS.ErrnoException).code !== 'EADDRINUSE') throw e;
		// Another Runnel process (the app, a worker, the seed) already runs the fake on this port: share it.
		logger.info({ url }, 'using the local fake S3 server already running');
	}
	const store = new S3ObjectStore(s3Client(url, { ...FAKE_S3_CREDENTIALS }), s3.bucket, `local fake S3 ${url}/${s3.bucket}`);
	try {
		await store.ensureBucket();
	} catch (e) {
		throw new Error(`port ${port} on 127.0.0.1 is taken by something that is not an S3 server (set S3_FAKE_PORT or S3_URL): ${e}`, {
			cause: e
		});
	}
	return store;
}

/** Stops the local fake S3 server if this process started it. */
export async function closeObjectStore(): Promise<void> {
	const f = fake;
	fake = undefined;
	storePromise = undefined;
	await f?.close();
}

/** The archive key of an upload: district, batch id and the file's sha256. */
export function archiveKey(districtCode: string, batchId: string, sha256: string, extension: string): string {
	const safeCode = districtCode.replace(/[^A-Za-z0-9_-]/g, '_');
	return `batches/${safeCode}/${batchId}/${sha256}.${extension}`;
}
