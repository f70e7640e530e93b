// Loads the demo practice records THROUGH THE INTAKE PIPELINE: each district's file is created as a batch
// (archived in object storage, Idempotency-Key claimed) and processed by the same code the worker runs,
// so the demo's records, versions and findings are exactly what an upload would have produced.
// Idempotent: a file already loaded (same district and SHA-256, committed) is skipped on re-seed.
import { createHash } from 'node:crypto';
import { Readable } from 'node:stream';
import type { Principal } from '../../src/lib/server/auth/principal';
import { createBatch } from '../../src/lib/server/batches/create';
import { processBatch } from '../../src/lib/server/batches/process';
import { stopBoss } from '../../src/lib/server/batches/queue';
import { config } from '../../src/lib/server/config';
import { listReleases, publishRelease } from '../../src/lib/server/dataset/release';
import { getDb } from '../../src/lib/server/db';
import { getActiveMethodVersion } from '../../src/lib/server/methods';
import { rebuildMethod } from '../../src/lib/server/rollups/refresh';
import { closeObjectStore } from '../../src/lib/server/storage/object-store';
import { toCsv } from './csv';
import { flaggedDemoRows } from './flagged';
import { generateDemoRecords } from './records';
import { eventsToCsv, generateDemoEvents } from './events';

/** The seed acts as a system client with the administrator's right to name the district. */
const SEED_PRINCIPAL: Principal = {
	kind: 'client',
	userId: null,
	email: null,
	name: 'Demo seed',
	role: 'admin',
	districtId: null,
	scopes: ['records:write', 'records:read'],
	credentialId: 'demo-seed',
	expiresAt: null
};

async function sendFile(
	district: string,
	fileName: string,
	csv: string,
	log: (m: string) => void,
	recordType: 'records' | 'events' = 'records'
): Promise<void> {
	const bytes = Buffer.from(csv, 'utf8');
	const sha256 = createHash('sha256').update(bytes).digest('hex');
	const db = getDb();
	const done = await db
		.selectFrom('batches as b')
		.innerJoin('districts as d', 'd.id', 'b.district_id')
		.select('b.id')
		.where('d.code', '=', district)
		.where('b.sha256', '=', sha256)
		.where('b.committed_at', 'is not', null)
		.executeTakeFirst();
	if (done) return;
	const answer = await createBatch(SEED_PRINCIPAL, {
		mode: 'all',
		recordType,
		format: 'csv',
		contentType: 'text/csv',
		districtCode: district,
		sheet: null,
		fileName,
		idempotencyKey: `demo-seed:${recordType === 'events' ? 'events:' : ''}${district}:${sha256}`,
		contentLength: bytes.length,
		body: Readable.from([bytes])
	});
	await processBatch(answer.body.id);
	const b = await db
		.selectFrom('batches')
		.select(['status', 'rows', 'errors', 'created', 'updated', 'withdrawn', 'committed_at'])
		.where('id', '=', answer.body.id)
		.executeTakeFirstOrThrow();
	if (b.status !== 'done' || !b.committed_at) {
		const findings = await db
			.selectFrom('batch_findings')
			.select(['row', 'column', 'message'])
			.where('batch_id', '=', answer.body.id)
			.orderBy('seq')
			.limit(5)
			.execute();
		throw new Error(
			`demo file ${fileName} was not accepted (batch ${answer.body.id}, ${b.errors} errors): ` +
				findings.map((f) => `row ${f.row} ${f.column}: ${f.message}`).join('; ')
		);
	}
	log(`demo ${recordType} ${fileName}: ${b.rows} rows, ${b.created} created, ${b.updated} updated, ${b.withdrawn} withdrawn`);
}

export const DEMO_RELEASE = '2027.1';

export async function seedDemoRecords(log: (m: string) => void = () => {}): Promise<void> {
	try {
		for (const d of generateDemoRecords()) {
			await sendFile(d.district, `${d.district.toLowerCase()}-practices.csv`, toCsv(d.initial), log);
			await sendFile(d.district, `${d.district.toLowerCase()}-corrections.csv`, toCsv(d.update), log);
			// Accepted with warnings: they wait in the review queue.
			await sendFile(d.district, `${d.district.toLowerCase()}-flagged.csv`, toCsv(flaggedDemoRows(d)), log);
		}
		// Upkeep events of the same records, through the same pipeline (type events), after all records.
		for (const d of generateDemoEvents()) await sendFile(d.district, `${d.district.toLowerCase()}-upkeep.csv`, eventsToCsv(d.rows), log, 'events');
		// One published research release, so the researcher's page has something to download and verify.
		const db = getDb();
		if ((await listReleases(db)).length === 0) {
			// The estimates a release is made of (the app's rollup service would build them on its first start).
			await rebuildMethod(db, await getActiveMethodVersion(db));
			const m = await publishRelease(db, {
				version: DEMO_RELEASE,
				notes: 'Demo release: the invented scenario of the six demo districts, for trying downloads and verification.',
				actor: 'demo seed',
				origin: config.origin
			});
			log(`demo release ${m.version}: ${m.row_count} rows, ${m.files.length} files, signed`);
		}
	} finally {
		await stopBoss();
		await closeObjectStore();
	}
}
