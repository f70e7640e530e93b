// `npm run worker`: a batch worker as its own process. It shares the PostgreSQL job queue with the app's
// in-process worker and with any other worker process (on this or other machines), so start as many as
// the load needs; run the app with RUNNEL_WORKER=0 to keep batch work out of the web process entirely.
// Needs the app's database (DATABASE_URL, or the local cluster `npm start` runs) and its object storage
// (S3_URL, or the local fake S3 server, which it starts or shares).
import { ensureDatabase, ROOT } from './lib/env';

async function main() {
	process.env.RUNNEL_ROOT ??= ROOT;
	const cluster = await ensureDatabase((m) => console.error(m));
	const { startBatchWorker, stopBatchWorker } = await import('../src/lib/server/batches/worker');
	const { closeObjectStore, getObjectStore } = await import('../src/lib/server/storage/object-store');
	const { closeDb } = await import('../src/lib/server/db');
	const store = await getObjectStore();
	await startBatchWorker();
	console.error(`Runnel batch worker ${process.pid} is taking jobs (object storage: ${store.description}). Ctrl-C stops it.`);

	let stopping = false;
	const stop = async (signal: string) => {
		if (stopping) return;
		stopping = true;
		console.error(`${signal}: finishing the current batch, then stopping…`);
		await stopBatchWorker();
		await closeObjectStore();
		await closeDb();
		cluster?.stop();
		process.exit(0);
	};
	process.on('SIGINT', () => void stop('SIGINT'));
	process.on('SIGTERM', () => void stop('SIGTERM'));
}

main().catch((e) => {
	console.error(`npm run worker failed: ${e instanceof Error ? e.message : e}`);
	process.exit(1);
});
