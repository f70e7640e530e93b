// `npm run dev`: the database as for `npm start`, then Vite's dev server with hot reload.
import { spawn } from 'node:child_process';
import path from 'node:path';
import { ensureDatabase, ROOT } from './lib/env';
import { migrateToLatest } from './migrate';
import { seedAll } from './seed';

const cluster = await ensureDatabase((m) => console.error(m));
process.env.RUNNEL_DEMO ??= '1';
await migrateToLatest();
await seedAll({ demo: process.env.RUNNEL_DEMO === '1' });
const child = spawn(process.execPath, [path.join(ROOT, 'node_modules', 'vite', 'bin', 'vite.js'), 'dev', ...process.argv.slice(2)], {
	stdio: 'inherit',
	env: process.env
});
const stop = () => child.kill('SIGINT');
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
child.on('exit', (code) => {
	cluster?.stop();
	process.exit(code ?? 0);
});
