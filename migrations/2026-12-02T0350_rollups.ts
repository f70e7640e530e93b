// Rollups: per-record estimates under each reduction method (with the keys and fiscal-year spans each
// record was last counted with), the summary cells by county / HUC-8 / district × FY × practice, and
// the refresh state of each method's summary.
// Frozen: never import application code here; later changes go in new, later-dated migrations.
import { sql, type Kysely } from 'kysely';

export async function up(db: Kysely<any>): Promise<void> {
	// One row per practice record and method version: the estimate (lb/yr, independent of the FY) and the
	// footprint the summary counted it with (district, county, HUC-8, practice, operation, costs and the
	// FYs it counts in on each basis). Old footprints tell a refresh which summary cells a change touches.
	await db.schema
		.createTable('record_estimates')
		.addColumn('record_id', 'bigint', (c) => c.notNull().references('records.id'))
		.addColumn('method_version', 'text', (c) => c.notNull())
		.addColumn('counted', 'boolean', (c) => c.notNull())
		.addColumn('reason', 'text')
		.addColumn('credited_acres', sql`numeric(14, 4)`, (c) => c.notNull())
		.addColumn('n_lb_mean', sql`numeric(18, 6)`, (c) => c.notNull())
		.addColumn('n_lb_low', sql`numeric(18, 6)`, (c) => c.notNull())
		.addColumn('n_lb_high', sql`numeric(18, 6)`, (c) => c.notNull())
		.addColumn('p_lb_mean', sql`numeric(18, 6)`, (c) => c.notNull())
		.addColumn('p_lb_low', sql`numeric(18, 6)`, (c) => c.notNull())
		.addColumn('p_lb_high', sql`numeric(18, 6)`, (c) => c.notNull())
		.addColumn('district_id', 'integer', (c) => c.notNull())
		.addColumn('county_fips', 'char(5)', (c) => c.notNull())
		.addColumn('huc8', 'char(8)')
		.addColumn('practice_code', 'text', (c) => c.notNull())
		.addColumn('field_id', 'text')
		.addColumn('operation_key', 'text', (c) => c.notNull())
		.addColumn('cost_usd', sql`numeric(14, 2)`)
		.addColumn('cost_share_usd', sql`numeric(14, 2)`)
		.addColumn('state_fy_start_month', 'smallint', (c) => c.notNull())
		.addColumn('state_fy_installed', 'integer', (c) => c.notNull())
		.addColumn('state_fy_first', 'integer')
		.addColumn('state_fy_last', 'integer')
		.addColumn('federal_fy_installed', 'integer', (c) => c.notNull())
		.addColumn('federal_fy_first', 'integer')
		.addColumn('federal_fy_last', 'integer')
		.addColumn('computed_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.addPrimaryKeyConstraint('record_estimates_pk', ['record_id', 'method_version'])
		.execute();
	await db.schema.createIndex('record_estimates_district_idx').on('record_estimates').columns(['method_version', 'district_id']).execute();
	await db.schema
		.createIndex('record_estimates_county_idx')
		.on('record_estimates')
		.columns(['method_version', 'county_fips', 'practice_code'])
		.execute();
	await db.schema
		.createIndex('record_estimates_field_idx')
		.on('record_estimates')
		.columns(['method_version', 'district_id', 'field_id'])
		.where(sql.ref('field_id'), 'is not', null)
		.execute();

	// Summary cells. geo_level 'county' (geo = county FIPS), 'huc8' (geo = HUC-8, '' when not reported) or
	// 'district' (geo = ''); practice_code '*' = all practices. Every cell is per district, so sums over
	// districts are exact for every measure (operations are district-scoped identifiers).
	await db.schema
		.createTable('rollup_cells')
		.addColumn('method_version', 'text', (c) => c.notNull())
		.addColumn('fy_basis', 'text', (c) => c.notNull().check(sql`fy_basis in ('state', 'federal')`))
		.addColumn('basis', 'text', (c) => c.notNull().check(sql`basis in ('installed', 'in_service')`))
		.addColumn('geo_level', 'text', (c) => c.notNull().check(sql`geo_level in ('county', 'huc8', 'district')`))
		.addColumn('fy', 'integer', (c) => c.notNull())
		.addColumn('district_id', 'integer', (c) => c.notNull())
		.addColumn('geo', 'text', (c) => c.notNull())
		.addColumn('practice_code', 'text', (c) => c.notNull())
		.addColumn('practices', 'integer', (c) => c.notNull())
		.addColumn('operations', 'integer', (c) => c.notNull())
		.addColumn('credited_acres', 'numeric', (c) => c.notNull())
		.addColumn('cost_usd', 'numeric', (c) => c.notNull())
		.addColumn('cost_share_usd', 'numeric', (c) => c.notNull())
		.addColumn('n_lb_mean', 'numeric', (c) => c.notNull())
		.addColumn('n_lb_low', 'numeric', (c) => c.notNull())
		.addColumn('n_lb_high', 'numeric', (c) => c.notNull())
		.addColumn('p_lb_mean', 'numeric', (c) => c.notNull())
		.addColumn('p_lb_low', 'numeric', (c) => c.notNull())
		.addColumn('p_lb_high', 'numeric', (c) => c.notNull())
		.addPrimaryKeyConstraint('rollup_cells_pk', [
			'method_version',
			'fy_basis',
			'basis',
			'geo_level',
			'fy',
			'district_id',
			'geo',
			'practice_code'
		])
		.execute();
	await db.schema
		.createIndex('rollup_cells_district_idx')
		.on('rollup_cells')
		.columns(['method_version', 'district_id', 'fy_basis', 'basis', 'fy'])
		.execute();

	// Whether each method version's stored estimates and cells are current, and the progress of a rebuild.
	await db.schema
		.createTable('rollup_refresh')
		.addColumn('method_version', 'text', (c) => c.primaryKey())
		.addColumn('status', 'text', (c) => c.notNull().check(sql`status in ('pending', 'running', 'ready', 'stale', 'failed')`))
		.addColumn('state_fy_start_month', 'smallint')
		.addColumn('phase', 'text')
		.addColumn('done', 'integer', (c) => c.notNull().defaultTo(0))
		.addColumn('total', 'integer', (c) => c.notNull().defaultTo(0))
		.addColumn('error', 'text')
		.addColumn('requested_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.addColumn('started_at', 'timestamptz')
		.addColumn('finished_at', 'timestamptz')
		.addColumn('updated_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.execute();
}

export async function down(db: Kysely<any>): Promise<void> {
	for (const t of ['rollup_refresh', 'rollup_cells', 'record_estimates']) await db.schema.dropTable(t).ifExists().execute();
}
