// What /api/v1/health reports: the database answers and every migration shipped with the app is applied.
import { sql } from 'kysely';
import { getDb } from './db';
import { appliedMigrations } from './db/migrations';
import { APP_VERSION } from '$lib/version';

// The migrations this build ships with, known at build time.
const shipped = Object.keys(import.meta.glob('/migrations/*.ts'))
	.map((p) => p.replace(/^.*\//, '').replace(/\.ts$/, ''))
	.sort();

export interface Health {
	status: 'ok' | 'degraded';
	version: string;
	database: 'ok' | 'unreachable';
	migrations: { current: boolean; applied: number; shipped: number; pending: string[] };
}

export async function checkHealth(): Promise<Health> {
	const db = getDb();
	try {
		await sql`select 1`.execute(db);
	} catch {
		return {
			status: 'degraded',
			version: APP_VERSION,
			database: 'unreachable',
			migrations: { current: false, applied: 0, shipped: shipped.length, pending: [] }
		};
	}
	const applied = new Set(await appliedMigrations(db));
	const pending = shipped.filter((m) => !applied.has(m));
	return {
		status: pending.length === 0 ? 'ok' : 'degraded',
		version: APP_VERSION,
		database: 'ok',
		migrations: { current: pending.length === 0, applied: applied.size, shipped: shipped.length, pending }
	};
}
