// Vitest global setup for API and browser tests. `npm test` has already built the app and prepared a
// throwaway database (DATABASE_URL). Run alone (`npx vitest --project api`), this starts one itself.
import { spawnSync } from 'node:child_process';
import path from 'node:path';
import { startFakeS3Process } from '../../scripts/lib/fake-s3';
import { startThrowawayCluster } from '../../scripts/lib/postgres';

const ROOT = path.resolve(import.meta.dirname, '..', '..');

export default async function setup() {
	process.env.RUNNEL_DEMO = '1';
	process.env.RUNNEL_ROOT = ROOT;
	// Uploads are archived in one fake S3 server shared by every process of the run.
	const s3 = process.env.S3_URL ? null : await startFakeS3Process();
	if (s3) Object.assign(process.env, s3.env);
	if (process.env.DATABASE_URL) return () => s3?.stop();
	const cluster = await startThrowawayCluster('runnel_test');
	process.env.DATABASE_URL = cluster.url;
	for (const script of ['scripts/migrate.ts', 'scripts/seed.ts']) {
		const r = spawnSync(process.execPath, ['--import', 'tsx', path.join(ROOT, script)], { cwd: ROOT, stdio: 'inherit', env: process.env });
		if (r.status !== 0) throw new Error(`${script} failed`);
	}
	return () => {
		s3?.stop();
		cluster.stop();
	};
}
