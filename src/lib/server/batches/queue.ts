// The batch job queue: pg-boss 10 in the same PostgreSQL (schema `pgboss`). Any number of worker
// processes share it safely (jobs are fetched with SKIP LOCKED; a batch is also guarded by its own
// advisory lock while processed). Jobs are created inside the transaction that creates the batch.
import { CompiledQuery, type Kysely, type Transaction } from 'kysely';
import PgBoss from 'pg-boss';
import { config } from '../config';
import type { Database } from '../db/schema';
import { logger } from '../log';

export const BATCH_QUEUE = 'runnel-batch';
export const SWEEP_QUEUE = 'runnel-batch-sweep';
export const IDEMPOTENCY_CLEANUP_QUEUE = 'runnel-idempotency-cleanup';

export interface BatchJob {
	batchId: string;
}

let bossPromise: Promise<PgBoss> | undefined;
let boss: PgBoss | undefined;

/** The process's pg-boss instance, started (and its queues created) on first use. */
export function getBoss(): Promise<PgBoss> {
	bossPromise ??= (async () => {
		const b = new PgBoss({
			connectionString: config.databaseUrl,
			schema: 'pgboss',
			application_name: 'runnel-queue',
			max: Number(process.env.QUEUE_POOL_MAX ?? 3)
		});
		b.on('error', (err) => logger.error({ err }, 'job queue error'));
		await b.start();
		// Retries cover a worker that dies (the job expires and is fetched again) and passing failures
		// (storage or database unreachable). A batch that keeps failing ends `failed`.
		await b.createQueue(BATCH_QUEUE, { name: BATCH_QUEUE, retryLimit: 3, retryDelay: 10, retryBackoff: true, expireInSeconds: 4 * 3600 });
		await b.createQueue(SWEEP_QUEUE, { name: SWEEP_QUEUE, policy: 'singleton', retryLimit: 0, expireInSeconds: 300 });
		await b.createQueue(IDEMPOTENCY_CLEANUP_QUEUE, { name: IDEMPOTENCY_CLEANUP_QUEUE, policy: 'singleton', retryLimit: 0 });
		boss = b;
		return b;
	})().catch((e) => {
		bossPromise = undefined;
		throw e;
	});
	return bossPromise;
}

/** pg-boss runs its SQL on our transaction, so the job exists exactly when the batch does. */
function onTransaction(trx: Kysely<Database> | Transaction<Database>) {
	return {
		executeSql: async (text: string, values: unknown[]) => {
			const r = await trx.executeQuery(CompiledQuery.raw(text, values));
			return { rows: r.rows as unknown[] };
		}
	};
}

export async function enqueueBatch(trx: Kysely<Database> | Transaction<Database>, batchId: string): Promise<void> {
	const b = await getBoss();
	await b.send(BATCH_QUEUE, { batchId } satisfies BatchJob, { db: onTransaction(trx) });
}

/** Listeners told when this process enqueued a job (so an in-process worker fetches it at once). */
const wakeListeners = new Set<() => void>();
export function onEnqueued(fn: () => void): () => void {
	wakeListeners.add(fn);
	return () => wakeListeners.delete(fn);
}
export function notifyEnqueued(): void {
	for (const fn of wakeListeners) fn();
}

export async function stopBoss(): Promise<void> {
	const b = boss;
	boss = undefined;
	bossPromise = undefined;
	if (b) await b.stop({ graceful: true, wait: true, timeout: 20_000 });
}
