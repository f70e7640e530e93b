// s3rver ships no types; the few members Runnel uses (a local fake S3 server for development and tests).
declare module 's3rver' {
	import type { AddressInfo } from 'node:net';
	interface S3rverOptions {
		address?: string;
		port?: number;
		silent?: boolean;
		directory?: string;
		resetOnClose?: boolean;
		allowMismatchedSignatures?: boolean;
		vhostBuckets?: boolean;
		configureBuckets?: Array<{ name: string; configs?: Array<string | Buffer> }>;
	}
	export default class S3rver {
		constructor(options?: S3rverOptions);
		run(): Promise<AddressInfo>;
		close(): Promise<void>;
	}
}
