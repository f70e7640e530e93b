// The review queue through the API: a flagged record enters the queue; the manager (only) decides; a return
// is mailed to the district's users, audited and shown on their home page until a new version arrives; a
// new version re-opens review only when it brings warnings not yet verified. Districts see their own only.
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, getDb } from '$lib/server/db';
import { appHandler, bearer, DEMO_TOKENS } from '../helpers/app';
import { sessionCookie } from '../helpers/accounts';
import { BLH_COUNTY, closeTestDb, count, uniquePrefix } from '../helpers/batches';

let app: Awaited<ReturnType<typeof appHandler>>;
beforeAll(async () => {
	app = await appHandler();
});
afterAll(async () => {
	await closeTestDb();
	await closeDb();
});

const prefix = uniquePrefix('REV');

/** A cover-crop record; `acres` above the plausible range gives the `acres-implausible` warning. */
function coverCrop(acres: number, notes?: string) {
	return {
		practice_code: '340',
		county_fips: BLH_COUNTY,
		installed_on: '2024-09-20',
		extent_acres: acres,
		field_id: 'F-REV-1',
		operation_id: 'OP-REV-1',
		cover_species: 'cereal rye',
		...(notes ? { notes } : {})
	};
}

async function put(localId: string, body: Record<string, unknown>, token = DEMO_TOKENS.district) {
	const res = await request(app).put(`/api/v1/records/BLH/${localId}`).set(bearer(token)).send(body);
	expect([200, 201], JSON.stringify(res.body)).toContain(res.status);
	return res.body as { record: { id: string; version: number; current_findings: Array<{ code: string }> } };
}

async function queueItem(recordId: string, token = DEMO_TOKENS.manager) {
	const res = await request(app).get('/api/v1/reviews?status=all&district=BLH&limit=500').set(bearer(token));
	expect(res.status).toBe(200);
	return (res.body.data as Array<{ record_id: string; status: string; warnings: Array<{ code: string }> }>).find(
		(i) => i.record_id === recordId
	);
}

async function allPages(url: string, token: string) {
	const out: Array<Record<string, unknown> & { district: { code: string } }> = [];
	let next: string | null = url;
	while (next) {
		const res: request.Response = await request(app).get(next).set(bearer(token));
		expect(res.status, JSON.stringify(res.body)).toBe(200);
		out.push(...res.body.data);
		next = res.body.next;
	}
	return out;
}

describe('review queue', () => {
	it('a record with a warning enters the queue as open; without warnings it does not', async () => {
		const flagged = await put(`${prefix}-A`, coverCrop(90000));
		expect(flagged.record.current_findings.map((f) => f.code)).toContain('acres-implausible');
		const item = await queueItem(flagged.record.id);
		expect(item?.status).toBe('open');
		expect(item?.warnings.map((w) => w.code)).toContain('acres-implausible');

		const clean = await put(`${prefix}-B`, coverCrop(40));
		expect(await queueItem(clean.record.id)).toBeUndefined();
	});

	it('lists with filters and cursor pages; the finding-code and practice filters hold', async () => {
		const items = await allPages('/api/v1/reviews?code=acres-implausible&practice=340&limit=2', DEMO_TOKENS.manager);
		expect(items.length).toBeGreaterThan(0);
		for (const i of items) {
			expect(i.practice_code).toBe('340');
			expect((i.warnings as Array<{ code: string }>).some((w) => w.code === 'acres-implausible')).toBe(true);
		}
		const ids = items.map((i) => i.record_id);
		expect(new Set(ids).size).toBe(ids.length);
		// Age: everything just queued is younger than a day.
		const old = await request(app)
			.get('/api/v1/reviews?min_age_days=1&district=BLH&code=acres-implausible')
			.set(bearer(DEMO_TOKENS.manager));
		expect(old.body.data.filter((i: { local_id: string }) => i.local_id.startsWith(prefix))).toEqual([]);
		const bad = await request(app).get('/api/v1/reviews?min_age_days=soon').set(bearer(DEMO_TOKENS.manager));
		expect(bad.status).toBe(400);
	});

	it('a district sees only its own records; asking for another district is refused', async () => {
		const own = await allPages('/api/v1/reviews?status=all&limit=200', DEMO_TOKENS.district);
		expect(own.length).toBeGreaterThan(0);
		expect(new Set(own.map((i) => i.district.code))).toEqual(new Set(['BLH']));
		const other = await allPages('/api/v1/reviews?status=all&limit=200', DEMO_TOKENS.district2);
		expect(other.every((i) => i.district.code === 'KTP')).toBe(true);
		const res = await request(app).get('/api/v1/reviews?district=BLH').set(bearer(DEMO_TOKENS.district2));
		expect(res.status).toBe(403);
	});

	it('a district (and an admin, and a researcher) cannot decide', async () => {
		const { record } = await put(`${prefix}-C`, coverCrop(80000));
		for (const token of [DEMO_TOKENS.district, DEMO_TOKENS.admin, DEMO_TOKENS.researcher]) {
			const res = await request(app)
				.post(`/api/v1/records/${record.id}/review`)
				.set(bearer(token))
				.send({ decision: 'verified', comment: 'looks right' });
			expect(res.status).toBe(403);
			expect(res.headers['content-type']).toMatch(/problem\+json/);
		}
		expect(await count('select count(*) as n from record_reviews where record_id = $1', [record.id])).toBe(0);
		expect((await queueItem(record.id))?.status).toBe('open');
	});

	it('the manager returns a record: comment required, stored with who and when, mailed, audited, on the home page until a new version', async () => {
		const localId = `${prefix}-D`;
		const { record } = await put(localId, coverCrop(95000));
		const noComment = await request(app)
			.post(`/api/v1/records/${record.id}/review`)
			.set(bearer(DEMO_TOKENS.manager))
			.send({ decision: 'returned', comment: '  ' });
		expect(noComment.status).toBe(422);
		expect(noComment.body.errors[0].pointer).toBe('/comment');

		const res = await request(app)
			.post(`/api/v1/records/${record.id}/review`)
			.set(bearer(DEMO_TOKENS.manager))
			.send({ decision: 'returned', comment: `Please check the acres of ${localId}: 95,000 ac of cover crop on one field?` });
		expect(res.status, JSON.stringify(res.body)).toBe(201);
		expect(res.body.status).toBe('returned');
		expect(typeof res.body.review.decided_by).toBe('string');
		expect(res.body.mailed_to).toBeGreaterThan(0);

		const db = getDb();
		const stored = await db.selectFrom('record_reviews').selectAll().where('record_id', '=', record.id).executeTakeFirstOrThrow();
		expect(stored.decision).toBe('returned');
		expect(stored.decided_by_user_id).not.toBeNull();
		expect(stored.decided_at).toBeInstanceOf(Date);
		expect(stored.cleared_at).toBeNull();

		const mail = await db
			.selectFrom('mail_messages')
			.selectAll()
			.where('kind', '=', 'record-returned')
			.where('subject', 'like', `%${localId}%`)
			.executeTakeFirstOrThrow();
		expect(mail.to_addresses).toContain('district@runnel.test');
		expect(mail.text_body).toContain('95,000 ac of cover crop');
		expect(mail.text_body).toContain(`/records/${record.id}`);

		const audit = await db
			.selectFrom('audit_log')
			.selectAll()
			.where('action', '=', 'review-returned')
			.orderBy('id', 'desc')
			.executeTakeFirstOrThrow();
		expect(audit.detail).toMatchObject({ record_id: record.id, local_id: localId });

		const cookie = await sessionCookie('district@runnel.test');
		const home = await request(app).get('/').set('cookie', cookie).set('accept', 'text/html');
		expect(home.text).toContain('Returned for correction');
		expect(home.text).toContain(localId);
		// The other district's home does not show it.
		const otherHome = await request(app)
			.get('/')
			.set('cookie', await sessionCookie('district2@runnel.test'))
			.set('accept', 'text/html');
		expect(otherHome.text).not.toContain(localId);

		// A corrected version arrives: the return ends, and without warnings the record leaves the queue.
		await put(localId, coverCrop(95));
		const after = await db.selectFrom('record_reviews').selectAll().where('id', '=', stored.id).executeTakeFirstOrThrow();
		expect(after.cleared_at).not.toBeNull();
		expect(after.cleared_by_version).toBe(2);
		expect((await queueItem(record.id))?.status).toBe('cleared');
		const home2 = await request(app).get('/').set('cookie', cookie).set('accept', 'text/html');
		expect(home2.text).not.toContain(localId);
	});

	it('after a verification, a new version re-opens review only if it brings new warnings', async () => {
		const localId = `${prefix}-E`;
		const { record } = await put(localId, coverCrop(70000));
		const ok = await request(app)
			.post(`/api/v1/records/${record.id}/review`)
			.set(bearer(DEMO_TOKENS.manager))
			.send({ decision: 'verified', comment: 'Confirmed by phone: a county-wide enrolment recorded as one field.' });
		expect(ok.status).toBe(201);
		expect((await queueItem(record.id))?.status).toBe('verified');

		// Same warning, another change (a different acreage, still implausible): stays verified.
		await put(localId, coverCrop(71000));
		expect((await queueItem(record.id))?.status).toBe('verified');

		// A new warning (a formula in the notes): back in the queue.
		await put(localId, coverCrop(71000, '=SUM(A1:A2)'));
		const item = await queueItem(record.id);
		expect(item?.status).toBe('open');
		expect(item?.warnings.map((w) => w.code).sort()).toEqual(['acres-implausible', 'formula-in-cell']);

		// Nothing to decide on a record without warnings.
		const clean = await put(`${prefix}-F`, coverCrop(30));
		const none = await request(app)
			.post(`/api/v1/records/${clean.record.id}/review`)
			.set(bearer(DEMO_TOKENS.manager))
			.send({ decision: 'verified', comment: 'fine' });
		expect(none.status).toBe(409);
		const missing = await request(app)
			.post('/api/v1/records/999999999/review')
			.set(bearer(DEMO_TOKENS.manager))
			.send({ decision: 'verified', comment: 'fine' });
		expect(missing.status).toBe(404);
	});
});
