// Upkeep records through the real batch API (POST /api/v1/batches?type=events): the demo mistakes file
// gives findings by row and column, a clean file is written once (re-sending is unchanged), a changed
// event gets a new version, unknown practices reject the row, and the schema documents are served.
import { randomUUID } from 'node:crypto';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import request from 'supertest';
import { afterAll, describe, expect, it } from 'vitest';
import { appHandler, DEMO_TOKENS } from '../helpers/app';
import { allFindings, closeTestDb, count, csv, DEMO_DIR, demoFile, runBatch, sendBatch, waitForBatch } from '../helpers/batches';

afterAll(closeTestDb);

const T = DEMO_TOKENS;
const HEADER = ['local_id', 'event_on', 'kind', 'stop_board_height_in', 'structure_id', 'media_added_cu_yd', 'notes'];

interface Mistake {
	row: number;
	column: string | null;
	code: string;
	severity: 'error' | 'warning';
	what: string;
}

/** A BLH bioreactor and a drainage water management practice from the seeded demo records. */
async function blhPractice(code: string): Promise<{ id: string; local_id: string; installed_on: string }> {
	const c = (await import('../helpers/batches')).db;
	const client = await c();
	const r = await client.query<{ id: string; local_id: string; installed_on: string }>(
		`select r.id::text as id, r.local_id, r.installed_on::text as installed_on from records r join districts d on d.id = r.district_id
		 where d.code = 'BLH' and r.practice_code = $1 and r.status = 'installed' order by r.local_id limit 1`,
		[code]
	);
	return r.rows[0];
}

describe('the demo seed', () => {
	it('loaded upkeep events through the pipeline (event batches, versions from a batch)', async () => {
		expect(
			await count(`select count(*) as n from batches where record_type = 'events' and committed_at is not null`)
		).toBeGreaterThanOrEqual(6);
		expect(await count('select count(*) as n from practice_events')).toBeGreaterThan(1000);
		expect(await count('select count(*) as n from practice_event_versions where batch_id is null')).toBe(0);
	});
});

describe('the demo events mistakes file in check mode', () => {
	const manifest = JSON.parse(readFileSync(path.join(DEMO_DIR, 'events-mistakes.json'), 'utf8')) as { mistakes: Mistake[] };

	it('names the right row and column for each mistake, and writes nothing', async () => {
		expect(manifest.mistakes.length).toBeGreaterThanOrEqual(12);
		const before = await count('select count(*) as n from practice_events');
		const b = await runBatch(T.district, demoFile('events-mistakes.csv'), {
			mode: 'check',
			type: 'events',
			fileName: 'events-mistakes.csv'
		});
		expect(b.status).toBe('done');
		expect(b.type).toBe('events');
		expect(b.schema_version).toBe('1');
		expect(b.valid).toBe(false);
		expect(b.committed).toBe(false);
		expect(b.counts.rows).toBe(manifest.mistakes.length + 1);
		const findings = await allFindings(T.district, b.id);
		for (const m of manifest.mistakes) {
			const hit = findings.find((f) => f.row === m.row && f.column === m.column && f.code === m.code);
			expect(
				hit,
				`${m.what}: expected ${m.code} at row ${m.row}, column ${m.column}; got ${JSON.stringify(findings.filter((f) => f.row === m.row))}`
			).toBeDefined();
			expect(hit!.severity).toBe(m.severity);
			expect(hit!.cell).toMatch(/^[A-G]\d+$/);
			expect(hit!.message.length).toBeGreaterThan(10);
		}
		const documented = new Set(manifest.mistakes.map((m) => `${m.row}|${m.column}|${m.code}`));
		expect(findings.filter((f) => !documented.has(`${f.row}|${f.column}|${f.code}`))).toEqual([]);
		// Two warnings, eleven errors: the good row and the two flagged rows would be accepted.
		expect(b.counts.accepted).toBe(3);
		expect(await count('select count(*) as n from practice_events')).toBe(before);
	});

	it('in all mode writes nothing at all', async () => {
		const before = await count('select count(*) as n from practice_events');
		const b = await runBatch(T.district, demoFile('events-mistakes.csv'), { mode: 'all', type: 'events' });
		expect(b.committed).toBe(false);
		expect(b.counts.created).toBe(0);
		expect(await count('select count(*) as n from practice_events')).toBe(before);
	});
});

describe('sending events', () => {
	it('the clean demo file twice: written once, then all unchanged with no new version', async () => {
		const file = demoFile('events-clean.csv');
		const first = await runBatch(T.district, file, { mode: 'all', type: 'events', fileName: 'events-clean.csv' });
		expect(first.status).toBe('done');
		expect(first.valid).toBe(true);
		expect(first.committed).toBe(true);
		expect(first.counts.rows).toBe(12);
		expect(first.counts.created + first.counts.unchanged).toBe(12);
		const versions = await count('select count(*) as n from practice_event_versions');
		const second = await runBatch(T.district, file, { mode: 'all', type: 'events', fileName: 'events-clean.csv' });
		expect(second.counts.unchanged).toBe(12);
		expect(second.counts.created + second.counts.updated).toBe(0);
		expect(await count('select count(*) as n from practice_event_versions')).toBe(versions);
	});

	it('a changed event (same practice, date and kind) gets a new version with the changed fields', async () => {
		const p = await blhPractice('554');
		const day = '2026-11-27';
		const v1 = csv(HEADER, [[p.local_id, day, 'structure_setting', 30, 'CS-9', null, null]]);
		const a = await runBatch(T.district, v1, { mode: 'all', type: 'events' });
		expect(a.counts.created + a.counts.unchanged).toBe(1);
		const v2 = csv(HEADER, [[p.local_id, day, 'Structure_Setting', 33.25, 'CS-9', null, 'Raised a board.']]);
		const b = await runBatch(T.district, v2, { mode: 'valid', type: 'events' });
		expect(b.counts.updated).toBe(1);
		const c = await (await import('../helpers/batches')).db();
		const ev = await c.query(
			`select e.version, e.stop_board_height_in::text as h, v.changed_fields from practice_events e
			 join practice_event_versions v on v.event_id = e.id and v.version = e.version
			 where e.local_id = $1 and e.event_on = $2 and e.kind = 'structure_setting'`,
			[p.local_id, day]
		);
		expect(ev.rows).toHaveLength(1);
		expect(ev.rows[0].version).toBeGreaterThanOrEqual(2);
		expect(ev.rows[0].h).toBe('33.25');
		expect(ev.rows[0].changed_fields).toEqual(['notes', 'stop_board_height_in']);
	});

	it('valid mode keeps the good rows and rejects an unknown practice and one of another district', async () => {
		const p = await blhPractice('605');
		const c = await (await import('../helpers/batches')).db();
		const ktp = (
			await c.query(
				`select r.local_id from records r join districts d on d.id = r.district_id where d.code = 'KTP' order by r.local_id limit 1`
			)
		).rows[0].local_id as string;
		const body = csv(HEADER, [
			[p.local_id, '2026-11-28', 'inspection', null, null, null, 'valid-mode test'],
			['NOT-A-PRACTICE', '2026-11-28', 'inspection', null, null, null, null],
			[ktp, '2026-11-28', 'inspection', null, null, null, null]
		]);
		const b = await runBatch(T.district, body, { mode: 'valid', type: 'events' });
		expect(b.counts.accepted).toBe(1);
		expect(b.counts.rejected).toBe(2);
		const findings = await allFindings(T.district, b.id);
		expect(findings.map((f) => [f.row, f.column, f.code])).toEqual([
			[3, 'local_id', 'practice-unknown'],
			[4, 'local_id', 'practice-unknown']
		]);
		expect(await count(`select count(*) as n from practice_events where local_id = $1 and event_on = '2026-11-28'`, [p.local_id])).toBe(1);
	});

	it('takes a JSON array too, and the same Idempotency-Key with another body is refused (422)', async () => {
		const p = await blhPractice('605');
		const key = randomUUID();
		const body = JSON.stringify([{ local_id: p.local_id, event_on: '2026-11-29', kind: 'mowing' }]);
		const res = await sendBatch(T.district, body, { mode: 'all', type: 'events', contentType: 'application/json', key });
		expect(res.status).toBe(202);
		const done = await waitForBatch(T.district, res.body.id);
		expect(done.counts.accepted).toBe(1);
		// A warning (mowing is unusual for a bioreactor), not an error.
		expect(done.findings_by_code).toEqual({ 'kind-unusual-for-practice': 1 });
		const again = await sendBatch(T.district, body.replace('mowing', 'repair'), {
			mode: 'all',
			type: 'events',
			contentType: 'application/json',
			key
		});
		expect(again.status).toBe(422);
		// The same bytes as records (not events) are another request too.
		const asRecords = await sendBatch(T.district, body, { mode: 'all', contentType: 'application/json', key });
		expect(asRecords.status).toBe(422);
	});

	it('lists event batches with ?type=events and refuses an unknown type', async () => {
		const list = await request(await appHandler())
			.get('/api/v1/batches?type=events&limit=5')
			.set('authorization', `Bearer ${T.district}`);
		expect(list.status).toBe(200);
		expect(list.body.data.length).toBeGreaterThan(0);
		expect(list.body.data.every((b: { type: string }) => b.type === 'events')).toBe(true);
		const bad = await request(await appHandler())
			.post('/api/v1/batches?type=things')
			.set('authorization', `Bearer ${T.district}`)
			.set('content-type', 'text/csv')
			.send('x');
		expect(bad.status).toBe(400);
		expect(bad.headers['content-type']).toContain('application/problem+json');
	});
});

describe('the event schema documents', () => {
	it('serves the JSON Schema, the CSV template and the XLSX template without a token', async () => {
		const app = await appHandler();
		const js = await request(app).get('/api/v1/schema/practice-event.json');
		expect(js.status).toBe(200);
		expect(js.headers['content-type']).toContain('application/schema+json');
		const schema = JSON.parse(js.text);
		expect(schema.$id).toBe('urn:runnel:schema:practice-event:v1');
		expect(schema.properties.kind.enum).toContain('structure_setting');
		const t = await request(app).get('/api/v1/schema/practice-event.csv');
		expect(t.status).toBe(200);
		expect(t.text).toBe('local_id,event_on,kind,stop_board_height_in,structure_id,media_added_cu_yd,notes\r\n');
		const x = await request(app)
			.get('/api/v1/schema/practice-event.xlsx')
			.buffer(true)
			.parse((res, cb) => {
				const chunks: Buffer[] = [];
				res.on('data', (c: Buffer) => chunks.push(c));
				res.on('end', () => cb(null, Buffer.concat(chunks)));
			});
		expect(x.status).toBe(200);
		expect((x.body as Buffer).subarray(0, 2).toString()).toBe('PK');
	});

	it('is in the OpenAPI document, with type=events on batch creation', async () => {
		const doc = (await request(await appHandler()).get('/api/v1/openapi.json')).body;
		expect(doc.paths['/api/v1/schema/practice-event.json']).toBeDefined();
		expect(doc.components.schemas.PracticeEventV1.properties.kind.enum).toHaveLength(5);
		const params = doc.paths['/api/v1/batches'].post.parameters.map((p: { name: string }) => p.name);
		expect(params).toContain('type');
	});
});

describe('GET /api/v1/records/{id} with its upkeep events', () => {
	interface ApiEvent {
		id: string;
		event_on: string;
		kind: string;
		version: number;
		stop_board_height_in: number | null;
		media_added_cu_yd: number | null;
		structure_id: string | null;
		notes: string | null;
		batch_id: string | null;
	}
	const plusYears = (d: string, n: number) => `${Number(d.slice(0, 4)) + n}${d.slice(4)}`;

	it('lists a bioreactor’s events oldest first with their fields and version, and its upkeep status', async () => {
		const bio = await blhPractice('605');
		const wcs = await blhPractice('554');
		const b = await runBatch(
			T.district,
			csv(HEADER, [
				[bio.local_id, '2026-11-20', 'media_top_up', null, null, 12.5, 'api detail test'],
				[wcs.local_id, '2026-11-21', 'structure_setting', 27.5, 'CS-API', null, null]
			]),
			{ mode: 'all', type: 'events' }
		);
		expect(b.committed).toBe(true);
		const app = await appHandler();
		const res = await request(app).get(`/api/v1/records/${bio.id}`).set('authorization', `Bearer ${T.district}`).expect(200);
		const events = res.body.events as ApiEvent[];
		expect(events.length).toBe(await count('select count(*) as n from practice_events where record_id = $1', [bio.id]));
		expect(events.map((e) => e.event_on)).toEqual(events.map((e) => e.event_on).sort());
		const topUp = events.find((e) => e.event_on === '2026-11-20' && e.kind === 'media_top_up');
		expect(topUp).toMatchObject({ media_added_cu_yd: 12.5, stop_board_height_in: null, notes: 'api detail test', version: 1 });
		expect(topUp!.batch_id).toBe(b.id);
		// Upkeep: the last top-up or inspection up to today, due the hub's interval (default 2 years) later.
		const upkeepDays = events.filter((e) => ['media_top_up', 'inspection'].includes(e.kind)).map((e) => e.event_on);
		const last = upkeepDays.at(-1)!;
		expect(last >= '2026-11-20').toBe(true);
		expect(res.body.upkeep).toEqual({ years: 2, last_upkeep_on: last, due_by: plusYears(last, 2), overdue: false });

		// Another practice: its events, no upkeep status.
		const other = await request(app).get(`/api/v1/records/${wcs.id}`).set('authorization', `Bearer ${T.district}`).expect(200);
		expect(other.body.upkeep).toBeNull();
		expect((other.body.events as ApiEvent[]).find((e) => e.event_on === '2026-11-21')).toMatchObject({
			kind: 'structure_setting',
			stop_board_height_in: 27.5,
			structure_id: 'CS-API',
			media_added_cu_yd: null
		});
	});

	it('says when a bioreactor’s upkeep is overdue', async () => {
		const c = await (await import('../helpers/batches')).db();
		// An installed bioreactor, in service (10-year lifespan), with no top-up or inspection for over 3 years.
		const r = await c.query<{ id: string; installed_on: string; last: string | null }>(
			`select r.id::text as id, r.installed_on::text as installed_on,
			   (select max(e.event_on)::text from practice_events e where e.record_id = r.id and e.kind in ('media_top_up', 'inspection')) as last
			 from records r join districts d on d.id = r.district_id
			 where d.code = 'BLH' and r.practice_code = '605' and r.status = 'installed'
			   and r.installed_on between current_date - interval '9 years' and current_date - interval '3 years'
			   and not exists (select 1 from practice_events e where e.record_id = r.id and e.kind in ('media_top_up', 'inspection')
			                   and e.event_on > current_date - interval '3 years')
			 order by r.id limit 1`
		);
		expect(r.rows, 'the demo has an overdue BLH bioreactor').toHaveLength(1);
		const { id, installed_on, last } = r.rows[0];
		const res = await request(await appHandler())
			.get(`/api/v1/records/${id}`)
			.set('authorization', `Bearer ${T.district}`)
			.expect(200);
		expect(res.body.upkeep).toEqual({ years: 2, last_upkeep_on: last, due_by: plusYears(last ?? installed_on, 2), overdue: true });
	});

	it('is described in the OpenAPI document', async () => {
		const doc = (await request(await appHandler()).get('/api/v1/openapi.json')).body;
		const detail = doc.components.schemas.RecordDetail;
		expect(detail.properties.events.items.$ref).toBe('#/components/schemas/RecordEvent');
		expect(detail.required).toEqual(expect.arrayContaining(['events', 'upkeep']));
		expect(Object.keys(doc.components.schemas.RecordEvent.properties)).toEqual(
			expect.arrayContaining(['kind', 'event_on', 'version', 'stop_board_height_in', 'media_added_cu_yd', 'structure_id', 'notes'])
		);
		expect(doc.components.schemas.UpkeepStatus.required).toEqual(['years', 'last_upkeep_on', 'due_by', 'overdue']);
	});
});
