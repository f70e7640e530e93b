// `npm test`: every test against a throwaway PostgreSQL. Builds the app, migrates and seeds the
// throwaway database, runs vitest (unit, api, e2e projects), and prints `N passed, N failed`.
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { build } from './lib/build';
import { ROOT } from './lib/env';
import { startFakeS3Process, type FakeS3Process } from './lib/fake-s3';
import { startThrowawayCluster, type Cluster } from './lib/postgres';

const log = (m: string) => console.error(m);

function ensureChromium() {
	if (existsSync('/usr/bin/chromium')) return;
	if (process.getuid?.() !== 0) {
		log('Chromium is missing: install it with `sudo apt-get install -y chromium` (browser tests need it).');
		return;
	}
	log('Installing Debian package `chromium` for the browser tests…');
	const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
	spawnSync('apt-get', ['update', '-qq'], { stdio: 'inherit', env });
	spawnSync('apt-get', ['install', '-y', '-qq', 'chromium'], { stdio: 'inherit', env });
}

function tsx(script: string, env: NodeJS.ProcessEnv) {
	const r = spawnSync(process.execPath, ['--import', 'tsx', path.join(ROOT, script)], { cwd: ROOT, stdio: 'inherit', env });
	if (r.status !== 0) throw new Error(`${script} failed`);
}

async function main(): Promise<number> {
	const args = process.argv.slice(2);
	ensureChromium();
	let cluster: Cluster | null = null;
	let s3: FakeS3Process | null = null;
	const env: NodeJS.ProcessEnv = { ...process.env, RUNNEL_DEMO: '1', NODE_ENV: 'test', RUNNEL_ROOT: ROOT };
	try {
		if (!env.DATABASE_URL) {
			cluster = await startThrowawayCluster('runnel_test');
			env.DATABASE_URL = cluster.url;
			log(`Throwaway PostgreSQL on 127.0.0.1:${cluster.port}`);
		}
		if (!env.S3_URL) {
			// One object store for the whole run (seed, app, worker processes), in a temporary folder.
			s3 = await startFakeS3Process();
			Object.assign(env, s3.env);
		}
		if (!env.SKIP_BUILD) build(log);
		tsx('scripts/migrate.ts', env);
		tsx('scripts/seed.ts', env);

		const outDir = path.join(os.tmpdir(), `runnel-vitest-${process.pid}`);
		mkdirSync(outDir, { recursive: true });
		const jsonFile = path.join(outDir, 'results.json');
		const r = spawnSync(
			process.execPath,
			[
				path.join(ROOT, 'node_modules', 'vitest', 'vitest.mjs'),
				'run',
				'--reporter=default',
				'--reporter=json',
				`--outputFile.json=${jsonFile}`,
				...args
			],
			{ cwd: ROOT, stdio: 'inherit', env }
		);
		let passed = 0;
		let failed = 0;
		let skipped = 0;
		if (existsSync(jsonFile)) {
			const res = JSON.parse(readFileSync(jsonFile, 'utf8')) as {
				numPassedTests: number;
				numFailedTests: number;
				numPendingTests: number;
				numTodoTests: number;
				testResults: Array<{ status: string; message?: string }>;
			};
			passed = res.numPassedTests;
			failed = res.numFailedTests;
			skipped = res.numPendingTests + res.numTodoTests;
			// A file that failed to load has no tests but must count as a failure.
			failed += res.testResults.filter((t) => t.status === 'failed' && t.message).length;
		} else failed = 1;
		console.log(`${passed} passed, ${failed} failed${skipped ? `, ${skipped} skipped` : ''}`);
		return r.status === 0 && failed === 0 && passed > 0 ? 0 : 1;
	} finally {
		s3?.stop();
		cluster?.stop();
	}
}

main()
	.then((code) => process.exit(code))
	.catch((e) => {
		console.error(`npm test failed: ${e instanceof Error ? e.message : e}`);
		console.log('0 passed, 1 failed');
		process.exit(1);
	});
