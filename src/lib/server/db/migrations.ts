// Runs the migrations in migrations/ with Kysely's Migrator (also used by scripts/migrate.ts).
import { promises as fs } from 'node:fs';
import path from 'node:path';
import { FileMigrationProvider, Migrator, sql, type Kysely } from 'kysely';
import type { Database } from './schema';

export function migrationsFolder(): string {
	return path.resolve(process.env.RUNNEL_ROOT ?? process.cwd(), 'migrations');
}

export function migrator(db: Kysely<Database>): Migrator {
	return new Migrator({ db, provider: new FileMigrationProvider({ fs, path, migrationFolder: migrationsFolder() }) });
}

/** Names of the migrations recorded as applied in the database. */
export async function appliedMigrations(db: Kysely<Database>): Promise<string[]> {
	const r = await sql<{ name: string }>`select name from kysely_migration order by name`
		.execute(db)
		.catch(() => ({ rows: [] as { name: string }[] }));
	return r.rows.map((x) => x.name);
}
