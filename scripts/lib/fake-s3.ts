// Starts scripts/fake-s3.ts as a child process in a temporary folder and points S3_* at it.
import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { createInterface } from 'node:readline';
import { ROOT } from './env';

export interface FakeS3Process {
	url: string;
	env: Record<string, string>;
	stop: () => void;
}

export async function startFakeS3Process(): Promise<FakeS3Process> {
	const dir = mkdtempSync(path.join(os.tmpdir(), 'runnel-s3-'));
	const child = spawn(process.execPath, ['--import', 'tsx', path.join(ROOT, 'scripts', 'fake-s3.ts'), dir], {
		cwd: ROOT,
		stdio: ['pipe', 'pipe', 'inherit']
	});
	const url = await new Promise<string>((resolve, reject) => {
		const lines = createInterface({ input: child.stdout! });
		lines.once('line', (l) => {
			try {
				resolve((JSON.parse(l) as { url: string }).url);
			} catch (e) {
				reject(e);
			}
		});
		child.once('exit', (code) => reject(new Error(`fake S3 server exited (${code})`)));
	});
	return {
		url,
		env: { S3_URL: url, S3_BUCKET: 'runnel', S3_ACCESS_KEY_ID: 'S3RVER', S3_SECRET_ACCESS_KEY: 'S3RVER' },
		stop: () => {
			child.kill('SIGTERM');
			rmSync(dir, { recursive: true, force: true });
		}
	};
}
