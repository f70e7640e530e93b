// The one Kysely instance of the app, created on first use so scripts and tests can set
// DATABASE_URL before it connects.
import { Kysely, PostgresDialect } from 'kysely';
import pg from 'pg';
import { config } from '../config';
import type { Database } from './schema';

// `date` columns stay 'YYYY-MM-DD' strings (no time-zone shifts); bigint ids stay strings.
pg.types.setTypeParser(1082, (v) => v);

let instance: Kysely<Database> | undefined;
let pool: pg.Pool | undefined;

export function getPool(): pg.Pool {
	if (!pool) {
		pool = new pg.Pool({
			connectionString: config.databaseUrl,
			max: Number(process.env.DATABASE_POOL_MAX ?? 10),
			connectionTimeoutMillis: 5_000,
			idleTimeoutMillis: 30_000
		});
		// A dropped connection (database restarted) must not crash the app; the next query reconnects.
		pool.on('error', () => {});
	}
	return pool;
}

export function getDb(): Kysely<Database> {
	if (!instance) instance = new Kysely<Database>({ dialect: new PostgresDialect({ pool: getPool() }) });
	return instance;
}

/** Closes the pool (scripts and tests). */
export async function closeDb(): Promise<void> {
	const current = instance;
	instance = undefined;
	pool = undefined;
	if (current) await current.destroy();
}

export type { Database } from './schema';
