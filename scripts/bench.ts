// `npm run bench -- NAME`: runs scripts/bench/NAME.ts against a throwaway PostgreSQL. Benchmarks print
// ratios against a baseline measured in the same process; they are never timed assertions in tests.
import { existsSync, readdirSync } from 'node:fs';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { ROOT } from './lib/env';
import { startThrowawayCluster } from './lib/postgres';

const dir = path.join(ROOT, 'scripts', 'bench');
const available = (existsSync(dir) ? readdirSync(dir) : []).filter((f) => f.endsWith('.ts')).map((f) => f.replace(/\.ts$/, ''));
const names = process.argv.slice(2).filter((a) => !a.startsWith('-'));
if (names.length === 0 || names.some((n) => !existsSync(path.join(dir, `${n}.ts`)))) {
	console.error(`usage: npm run bench -- NAME…   (available: ${available.join(', ') || 'none yet'})`);
	process.exit(names.length === 0 ? 0 : 3);
}

const cluster = process.env.DATABASE_URL ? null : await startThrowawayCluster('runnel_bench');
if (cluster) process.env.DATABASE_URL = cluster.url;
process.env.RUNNEL_ROOT = ROOT;
try {
	for (const n of names) {
		const mod = await import(pathToFileURL(path.join(dir, `${n}.ts`)).href);
		await mod.run();
	}
} finally {
	cluster?.stop();
}
