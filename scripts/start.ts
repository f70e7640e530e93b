// `npm start`: everything a newcomer needs. Ensures PostgreSQL, migrates, seeds the demo scenario,
// builds when needed, serves on http://127.0.0.1:3000, and stops it all cleanly on Ctrl-C.
import http from 'node:http';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { build, buildIsStale } from './lib/build';
import { ensureDatabase, ROOT } from './lib/env';
import { PostgresSetupError } from './lib/postgres';
import { migrateToLatest } from './migrate';
import { seedAll } from './seed';

const log = (m: string) => console.error(m);

async function main() {
	process.env.RUNNEL_DEMO ??= '1';
	process.env.NODE_ENV ??= 'production';
	const host = process.env.HOST ?? '127.0.0.1';
	const port = Number(process.env.PORT ?? 3000);
	process.env.ORIGIN ??= `http://${host}:${port}`;
	process.env.RUNNEL_ROOT ??= ROOT;
	// adapter-node refuses bodies over BODY_SIZE_LIMIT (512 KB by default) before our code runs; uploads are
	// streamed and limited by MAX_UPLOAD_MB (and small JSON bodies by their endpoints) instead.
	process.env.BODY_SIZE_LIMIT ??= 'Infinity';

	const cluster = await ensureDatabase(log);
	await migrateToLatest();
	await seedAll({ demo: process.env.RUNNEL_DEMO === '1' });
	if (buildIsStale()) build(log);

	const { handler } = await import(pathToFileURL(path.join(ROOT, 'build', 'handler.js')).href);
	const server = http.createServer(handler);
	await new Promise<void>((resolve, reject) => {
		server.once('error', (e: NodeJS.ErrnoException) =>
			reject(e.code === 'EADDRINUSE' ? new Error(`port ${port} on ${host} is taken (set PORT to another port).`) : e)
		);
		server.listen(port, host, resolve);
	});

	const { DEMO_USERS, DEMO_PASSWORD } = await import('../seeds/demo');
	const lines = [`Runnel is serving on ${process.env.ORIGIN}`, `  health: ${process.env.ORIGIN}/api/v1/health`];
	if (cluster) lines.push(`  database: PostgreSQL on 127.0.0.1:${cluster.port} (data in ${path.relative(ROOT, cluster.dataDir)})`);
	if (process.env.RUNNEL_DEMO === '1') {
		lines.push('', 'DEMO MODE — demo sign-ins (password "' + DEMO_PASSWORD + '") and API tokens:');
		for (const u of DEMO_USERS) lines.push(`  ${u.role.padEnd(10)} ${u.email.padEnd(24)} ${u.token}`);
	}
	lines.push('', 'Press Ctrl-C to stop.');
	console.log(lines.join('\n'));

	let stopping = false;
	const stop = async (signal: string) => {
		if (stopping) return;
		stopping = true;
		log(`\n${signal}: stopping Runnel…`);
		server.closeAllConnections?.();
		await new Promise((r) => server.close(r));
		// In-process services (queue worker, fake SMTP and S3) listen for adapter-node's shutdown event.
		await Promise.race([emitShutdown(signal), new Promise((r) => setTimeout(r, 10_000))]);
		cluster?.stop();
		log('Stopped.');
		process.exit(0);
	};
	process.on('SIGINT', () => void stop('SIGINT'));
	process.on('SIGTERM', () => void stop('SIGTERM'));
}

async function emitShutdown(signal: string) {
	const listeners = process.listeners('sveltekit:shutdown' as NodeJS.Signals) as Array<(reason: string) => unknown>;
	await Promise.allSettled(listeners.map((l) => l(signal)));
}

main().catch((e) => {
	console.error(`npm start failed: ${e instanceof PostgresSetupError ? e.message : e instanceof Error ? e.message : e}`);
	process.exit(1);
});
