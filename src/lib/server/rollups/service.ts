// Background rebuilds of rollup summaries, inside the app process (registered in ../services.ts).
// Every few seconds: make sure the active method has a current summary (asking for a rebuild when it has
// none, when the state FY start month changed, or when an earlier rebuild failed a while ago), then claim
// one pending rebuild and run it. Claiming is a row update with SKIP LOCKED, so several app processes on
// one database never rebuild the same method twice at once.
import { sql } from 'kysely';
import { getDb } from '../db';
import { logger } from '../log';
import { activeMethodVersion } from './method-source';
import { rebuildMethod, requestRebuild, summaryState } from './refresh';
import { stateFyStartMonth } from './settings';

const POLL_MS = Number(process.env.ROLLUP_POLL_MS ?? 2000);
/** A rebuild whose progress has not moved for this long is considered abandoned (its process died). */
const STUCK_AFTER = '5 minutes';
/** A failed rebuild of the active method is retried after this long. */
const RETRY_FAILED_AFTER = '1 minute';

let timer: NodeJS.Timeout | undefined;
let running: Promise<void> | undefined;
let stopping = false;

/** One pass of the loop; exported for tests. Returns the method version rebuilt, if any. */
export async function rollupTick(): Promise<string | null> {
	const db = getDb();
	const version = await activeMethodVersion(db);
	if (version) {
		const state = await summaryState(db, version);
		const startMonth = await stateFyStartMonth(db);
		const failedLongAgo =
			state?.status === 'failed' &&
			(await sql<{ due: boolean }>`select ${state.updated_at}::timestamptz < now() - ${RETRY_FAILED_AFTER}::interval as due`.execute(db))
				.rows[0].due;
		if (!state || state.status === 'stale' || failedLongAgo || (state.status === 'ready' && state.state_fy_start_month !== startMonth)) {
			await requestRebuild(db, version);
		}
	}
	await sql`update rollup_refresh set status = 'pending', updated_at = now()
		where status = 'running' and updated_at < now() - ${STUCK_AFTER}::interval`.execute(db);
	const claimed = (
		await sql<{ method_version: string }>`
			update rollup_refresh set status = 'running', updated_at = now()
			where method_version = (
				select method_version from rollup_refresh where status = 'pending' order by requested_at limit 1 for update skip locked
			)
			returning method_version`.execute(db)
	).rows[0];
	if (!claimed) return null;
	const started = performance.now();
	const found = await rebuildMethod(db, claimed.method_version);
	if (!found) {
		await db.deleteFrom('rollup_refresh').where('method_version', '=', claimed.method_version).execute();
		return null;
	}
	logger.info({ method: claimed.method_version, ms: Math.round(performance.now() - started) }, 'rollup summary rebuilt');
	return claimed.method_version;
}

function schedule(): void {
	if (stopping) return;
	timer = setTimeout(() => {
		running = rollupTick()
			.then(() => undefined)
			.catch((e) => logger.error({ err: e }, 'rollup refresh failed'))
			.finally(() => {
				running = undefined;
				schedule();
			});
	}, POLL_MS);
	timer.unref();
}

export const rollupService = {
	name: 'rollups',
	start() {
		stopping = false;
		schedule();
	},
	async stop() {
		stopping = true;
		if (timer) clearTimeout(timer);
		await running;
	}
};
