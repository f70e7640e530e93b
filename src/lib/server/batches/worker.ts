// The batch worker: takes batch jobs from the pg-boss queue and processes them. Runs inside the app
// process by default (a background service) or alone with `npm run worker`; any number of workers on any
// number of machines share the queue. Also: crash recovery (a batch whose worker stopped reporting is
// queued again) and the hourly clean-up of expired Idempotency-Keys.
import { sql } from 'kysely';
import type PgBoss from 'pg-boss';
import { config } from '../config';
import { getDb } from '../db';
import { logger } from '../log';
import { BATCH_QUEUE, enqueueBatch, getBoss, IDEMPOTENCY_CLEANUP_QUEUE, onEnqueued, stopBoss, SWEEP_QUEUE, type BatchJob } from './queue';
import { processBatch } from './process';

let workerIds: string[] = [];
let unsubscribe: (() => void) | undefined;

/** Batches left `checking` by a worker that stopped reporting (crashed, killed, lost its database). */
export async function requeueStaleBatches(staleSeconds = config.batchStaleSeconds): Promise<string[]> {
	const db = getDb();
	return db.transaction().execute(async (trx) => {
		const stale = await trx
			.selectFrom('batches')
			.select('id')
			.where('status', '=', 'checking')
			.where(sql<boolean>`coalesce(heartbeat_at, created_at) < now() - make_interval(secs => ${staleSeconds})`)
			.forUpdate()
			.skipLocked()
			.execute();
		for (const b of stale) {
			await trx
				.updateTable('batches')
				.set({ status: 'received', heartbeat_at: sql`now()` as unknown as Date })
				.where('id', '=', b.id)
				.execute();
			await enqueueBatch(trx, b.id);
		}
		if (stale.length > 0) logger.warn({ batches: stale.map((b) => b.id) }, 'requeued batches whose worker stopped');
		return stale.map((b) => b.id);
	});
}

export async function deleteExpiredIdempotencyKeys(): Promise<number> {
	const r = await getDb()
		.deleteFrom('idempotency_keys')
		.where('expires_at', '<', sql<Date>`now()`)
		.executeTakeFirst();
	return Number(r.numDeletedRows ?? 0);
}

let wake: (() => void) | undefined;

async function handleBatchJob(jobs: PgBoss.JobWithMetadata<BatchJob>[]): Promise<void> {
	// pg-boss waits a polling interval after every fetch unless notified: with a backlog, fetch the next
	// job right away.
	wake?.();
	for (const job of jobs) {
		const { batchId } = job.data;
		const started = Date.now();
		try {
			const r = await processBatch(batchId);
			logger.info({ batchId, result: r.status, ms: Date.now() - started }, 'batch processed');
		} catch (err) {
			const last = job.retryCount >= job.retryLimit;
			const message = err instanceof Error ? err.message : String(err);
			logger.error({ err, batchId, attempt: job.retryCount + 1, last }, 'batch processing failed');
			await getDb()
				.updateTable('batches')
				.set(
					last
						? { status: 'failed', failure: message, finished_at: sql`now()` as unknown as Date }
						: { status: 'received', failure: `attempt ${job.retryCount + 1} failed (${message}); trying again` }
				)
				.where('id', '=', batchId)
				.where('status', 'in', ['received', 'checking'])
				.execute()
				.catch(() => {});
			throw err;
		}
	}
}

/** Starts taking jobs in this process. */
export async function startBatchWorker(): Promise<void> {
	const boss = await getBoss();
	const id = await boss.work<BatchJob>(
		BATCH_QUEUE,
		{ batchSize: 1, pollingIntervalSeconds: Number(process.env.QUEUE_POLL_SECONDS ?? 2), includeMetadata: true },
		handleBatchJob
	);
	workerIds.push(id);
	wake = () => boss.notifyWorker(id);
	// A job enqueued by this very process is fetched at once rather than at the next poll.
	unsubscribe = onEnqueued(wake);

	workerIds.push(
		await boss.work(SWEEP_QUEUE, { pollingIntervalSeconds: 30 }, async () => {
			await requeueStaleBatches();
		})
	);
	workerIds.push(
		await boss.work(IDEMPOTENCY_CLEANUP_QUEUE, { pollingIntervalSeconds: 60 }, async () => {
			await deleteExpiredIdempotencyKeys();
		})
	);
	await boss.schedule(SWEEP_QUEUE, '* * * * *');
	await boss.schedule(IDEMPOTENCY_CLEANUP_QUEUE, '17 * * * *');
	// Recover at once after a restart rather than at the next scheduled sweep.
	await requeueStaleBatches().catch((err) => logger.error({ err }, 'stale batch sweep failed'));
	logger.info('batch worker started');
}

export async function stopBatchWorker(): Promise<void> {
	unsubscribe?.();
	unsubscribe = undefined;
	wake = undefined;
	workerIds = [];
	await stopBoss();
}

export const batchWorkerService = {
	name: 'batch-worker',
	start: async () => {
		if (!config.inProcessWorker) return;
		await startBatchWorker();
	},
	stop: stopBatchWorker
};
