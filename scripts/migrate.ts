// `npm run db:migrate`: applies every pending migration in migrations/ and exits non-zero on error.
import { closeDb, getDb } from '../src/lib/server/db';
import { migrator } from '../src/lib/server/db/migrations';

export async function migrateToLatest(): Promise<void> {
	const { error, results } = await migrator(getDb()).migrateToLatest();
	for (const r of results ?? []) {
		if (r.status === 'Success') console.error(`migrated: ${r.migrationName}`);
		else if (r.status === 'Error') console.error(`migration failed: ${r.migrationName}`);
	}
	if (error) throw error instanceof Error ? error : new Error(String(error));
}

if (import.meta.url === `file://${process.argv[1]}`) {
	migrateToLatest()
		.then(() => closeDb())
		.catch(async (e) => {
			console.error(`db:migrate failed: ${e instanceof Error ? e.message : e}`);
			await closeDb();
			process.exit(1);
		});
}
