// `npm run db:seed`: reference data always; the demo scenario when RUNNEL_DEMO=1. Idempotent.
import { closeDb, getDb } from '../src/lib/server/db';
import { seedDemo } from '../seeds/demo';
import { seedDemoRecords } from '../seeds/demo/load-records';
import { seedReference } from '../seeds/reference';

export async function seedAll(opts: { demo: boolean }): Promise<void> {
	const db = getDb();
	await seedReference(db);
	if (opts.demo) {
		await seedDemo(db);
		// The demo's practice records go through the intake pipeline (batches), not direct SQL.
		await seedDemoRecords((m) => console.error(m));
	}
}

if (import.meta.url === `file://${process.argv[1]}`) {
	seedAll({ demo: process.env.RUNNEL_DEMO === '1' })
		.then(() => closeDb())
		.catch(async (e) => {
			console.error(`db:seed failed: ${e instanceof Error ? e.message : e}`);
			await closeDb();
			process.exit(1);
		});
}
