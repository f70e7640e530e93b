// Reference data every hub needs (not only the demo): counties, the practice catalog, default settings.
// Idempotent: safe to run on every start.
import { createRequire } from 'node:module';
import { sql, type Kysely } from 'kysely';
import { countiesFromTopology } from '../src/lib/domain/counties';
import { PRACTICE_CATALOG } from '../src/lib/domain/practice-catalog';
import { DEFAULT_METHOD } from '../src/lib/domain/reduction-method';
import type { Database } from '../src/lib/server/db/schema';

const require = createRequire(import.meta.url);

export const DEFAULT_SETTINGS: Record<string, unknown> = {
	hub_state_fips: process.env.HUB_STATE_FIPS ?? '19',
	state_fy_start_month: 7,
	active_method_version: DEFAULT_METHOD.version,
	small_cell_k: 3
};

export async function seedReference(db: Kysely<Database>): Promise<void> {
	const topology = require('us-atlas/counties-10m.json');
	const counties = countiesFromTopology(topology);
	for (let i = 0; i < counties.length; i += 1000) {
		await db
			.insertInto('counties')
			.values(counties.slice(i, i + 1000))
			.onConflict((oc) => oc.column('fips').doUpdateSet({ name: sql`excluded.name`, state_fips: sql`excluded.state_fips` }))
			.execute();
	}
	await db
		.insertInto('practices')
		.values(PRACTICE_CATALOG.map((x) => ({ ...x })))
		.onConflict((oc) =>
			oc.column('code').doUpdateSet({
				name: sql`excluded.name`,
				category: sql`excluded.category`,
				credited_basis: sql`excluded.credited_basis`,
				unit: sql`excluded.unit`,
				lifespan_years: sql`excluded.lifespan_years`,
				source_note: sql`excluded.source_note`
			})
		)
		.execute();
	// The default reduction method: stored once, never overwritten (a stored version is frozen).
	await db
		.insertInto('reduction_methods')
		.values({ version: DEFAULT_METHOD.version, label: DEFAULT_METHOD.label, method: JSON.stringify(DEFAULT_METHOD), created_by: 'seed' })
		.onConflict((oc) => oc.column('version').doNothing())
		.execute();
	// Settings: insert defaults, never overwrite what an admin changed.
	for (const [key, value] of Object.entries(DEFAULT_SETTINGS)) {
		await db
			.insertInto('settings')
			.values({ key, value: JSON.stringify(value) })
			.onConflict((oc) => oc.column('key').doNothing())
			.execute();
	}
}
