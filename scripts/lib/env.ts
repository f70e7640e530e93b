// Shared by start, dev and test: make sure a database is there and set DATABASE_URL.
import path from 'node:path';
import { startCluster, type Cluster } from './postgres';

export const ROOT = path.resolve(import.meta.dirname, '..', '..');

/** DATABASE_URL set → use it and start nothing; else start our own cluster in .data/pg. */
export async function ensureDatabase(log: (m: string) => void): Promise<Cluster | null> {
	if (process.env.DATABASE_URL) {
		log(`Using the database at DATABASE_URL (nothing started).`);
		return null;
	}
	const port = Number(process.env.PGPORT ?? 54329);
	const cluster = await startCluster({ dir: path.join(ROOT, '.data', 'pg'), port, database: 'runnel', log });
	process.env.DATABASE_URL = cluster.url;
	return cluster;
}
