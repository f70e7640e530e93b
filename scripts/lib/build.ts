// Builds the app when build/ is missing or older than its sources.
import { spawnSync } from 'node:child_process';
import { existsSync, readdirSync, statSync } from 'node:fs';
import path from 'node:path';
import { ROOT } from './env';

const SOURCES = [
	'src',
	'static',
	'migrations',
	'svelte.config.js',
	'vite.config.ts',
	'tailwind.config.ts',
	'package.json',
	'package-lock.json'
];

function newestMtime(p: string): number {
	if (!existsSync(p)) return 0;
	const st = statSync(p);
	if (!st.isDirectory()) return st.mtimeMs;
	let newest = st.mtimeMs;
	for (const e of readdirSync(p)) newest = Math.max(newest, newestMtime(path.join(p, e)));
	return newest;
}

export function buildIsStale(): boolean {
	const marker = path.join(ROOT, 'build', 'handler.js');
	if (!existsSync(marker)) return true;
	const built = statSync(marker).mtimeMs;
	return SOURCES.some((s) => newestMtime(path.join(ROOT, s)) > built);
}

export function build(log: (m: string) => void): void {
	log('Building the app (vite build)…');
	const r = spawnSync(process.execPath, [path.join(ROOT, 'node_modules', 'vite', 'bin', 'vite.js'), 'build', '--logLevel', 'warn'], {
		cwd: ROOT,
		stdio: 'inherit'
	});
	if (r.status !== 0) throw new Error('vite build failed (see above).');
}
