// Admin pages for people and districts: role and district changes (audited, effective at once),
// deactivation (sessions end, tokens stop), district edits limited to the hub state's counties, the
// audit log page with its filters, and the district API.
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, getDb } from '$lib/server/db';
import { appHandler, bearer, DEMO_TOKENS } from '../helpers/app';
import { createToken, createUser, postForm, sessionCookie, userIdOf } from '../helpers/accounts';

const EMAIL = 'admin.subject@runnel.test';
let subjectId: number;
let admin: string;

beforeAll(async () => {
	subjectId = await createUser({ email: EMAIL, role: 'manager', password: 'subject password', name: 'Admin Subject' });
	admin = await sessionCookie('admin@runnel.test');
});
afterAll(() => closeDb());

const api = async () => request(await appHandler());
const districtId = async (code: string) =>
	(await getDb().selectFrom('districts').select('id').where('code', '=', code).executeTakeFirstOrThrow()).id;

describe('changing role and district', () => {
	it('takes effect at once for sessions and tokens, and is audited', async () => {
		const session = await sessionCookie(EMAIL);
		const token = await createToken(subjectId, ['records:read', 'dataset:read'], 'subject token');
		const osf = await districtId('OSF');

		const bad = await postForm(`/admin/users/${subjectId}?/update`, { name: 'Admin Subject', role: 'district', district_id: '' }, admin);
		expect(bad.status).toBe(400);
		expect(bad.text).toContain('District staff need a district.');

		const res = await postForm(
			`/admin/users/${subjectId}?/update`,
			{ name: 'Admin Subject', role: 'district', district_id: String(osf) },
			admin
		);
		expect(res.status).toBe(200);

		const viaSession = await (await api()).get('/api/v1/me').set('cookie', session);
		expect(viaSession.body).toMatchObject({ role: 'district', district_id: osf });
		expect(viaSession.body.scopes.sort()).toEqual(['records:read', 'records:write', 'rollups:read']);
		// The token keeps only what the new role allows: dataset:read is gone.
		const viaToken = await (await api()).get('/api/v1/me').set(bearer(token));
		expect(viaToken.body.scopes).toEqual(['records:read']);

		const row = await getDb()
			.selectFrom('audit_log')
			.selectAll()
			.where('action', '=', 'role-changed')
			.where('subject_user_id', '=', subjectId)
			.orderBy('id', 'desc')
			.executeTakeFirstOrThrow();
		expect(row.detail).toEqual({
			from: { role: 'manager', district: null },
			to: { role: 'district', district: 'Osprey Flats Conservation District' }
		});
		expect(row.actor_user_id).toBe(await userIdOf('admin@runnel.test'));
	});

	it('an admin cannot change their own role or deactivate themselves', async () => {
		const me = await userIdOf('admin@runnel.test');
		const res = await postForm(`/admin/users/${me}?/update`, { name: 'Wren Adeyemi-Holt', role: 'manager' }, admin);
		expect(res.status).toBe(400);
		expect(res.text).toContain('You cannot change your own role');
		const off = await postForm(`/admin/users/${me}?/deactivate`, {}, admin);
		expect(off.status).toBe(400);
		expect((await (await api()).get('/api/v1/me').set('cookie', admin)).body.role).toBe('admin');
	});
});

describe('deactivation', () => {
	it('ends the sessions and stops the tokens; reactivation lets the tokens work again', async () => {
		const email = 'to.deactivate@runnel.test';
		const id = await createUser({ email, role: 'researcher', password: 'deactivate me please' });
		const session = await sessionCookie(email);
		const token = await createToken(id, ['dataset:read'], 'will be suspended');
		expect((await (await api()).get('/api/v1/me').set('cookie', session)).status).toBe(200);

		const res = await postForm(`/admin/users/${id}?/deactivate`, {}, admin);
		expect(res.status).toBe(200);
		expect((await (await api()).get('/api/v1/me').set('cookie', session)).status).toBe(401);
		expect((await (await api()).get('/api/v1/me').set(bearer(token))).status).toBe(401);
		expect(await getDb().selectFrom('sessions').select('id').where('user_id', '=', id).execute()).toEqual([]);
		// The right password now says the account is deactivated.
		const signIn = await postForm('/sign-in', { email, password: 'deactivate me please' });
		expect(signIn.status).toBe(403);
		expect(signIn.text).toContain('This account is deactivated.');

		const page = await (await api()).get('/admin/tokens').set('cookie', admin);
		expect(page.text).toContain('Suspended (owner deactivated)');

		expect((await postForm(`/admin/users/${id}?/reactivate`, {}, admin)).status).toBe(200);
		expect((await (await api()).get('/api/v1/me').set(bearer(token))).status).toBe(200);
		const actions = (await getDb().selectFrom('audit_log').select('action').where('subject_user_id', '=', id).execute()).map(
			(r) => r.action
		);
		expect(actions).toEqual(expect.arrayContaining(['user-deactivated', 'user-reactivated']));
	});
});

describe('districts', () => {
	it('an admin edits name, counties served (hub state only), contacts and notification', async () => {
		const id = await districtId('MLR');
		const page = await (await api()).get(`/admin/districts/${id}`).set('cookie', admin);
		expect(page.status).toBe(200);
		expect(page.text).toContain('Polk'); // an Iowa county is offered
		expect(page.text).not.toContain('value="17031"'); // Cook County, Illinois, is not

		const foreign = await postForm(
			`/admin/districts/${id}?/update`,
			{
				name: 'Meadowlark Run Conservation District',
				region: 'Central Iowa',
				counties: ['19153', '17031'],
				contact_name: [''],
				contact_email: [''],
				contact_title: [''],
				contact_phone: ['']
			},
			admin
		);
		expect(foreign.status).toBe(400);
		expect(foreign.text).toContain('Not a county of this hub');

		const badContact = await postForm(
			`/admin/districts/${id}?/update`,
			{
				name: 'Meadowlark Run Conservation District',
				region: 'Central Iowa',
				counties: ['19153'],
				contact_name: ['Someone'],
				contact_email: ['not-mail'],
				contact_title: [''],
				contact_phone: ['']
			},
			admin
		);
		expect(badContact.status).toBe(400);
		expect(badContact.text).toContain('Enter an e-mail address like name@example.org.');

		const ok = await postForm(
			`/admin/districts/${id}?/update`,
			{
				name: 'Meadowlark Run Soil and Water District',
				region: 'Central Iowa',
				counties: ['19153', '19049', '19099'],
				contact_name: ['Oskar Fenwhistle', 'Lune Abernathy-Cole'],
				contact_title: ['District conservationist', ''],
				contact_email: ['oskar.fenwhistle@meadowlarkrun.example.org', 'lune.ac@meadowlarkrun.example.org'],
				contact_phone: ['', '515-555-0142']
			},
			admin
		);
		expect(ok.status).toBe(200);
		const d = await getDb().selectFrom('districts').selectAll().where('id', '=', id).executeTakeFirstOrThrow();
		expect(d.name).toBe('Meadowlark Run Soil and Water District');
		expect(d.notify_on_rejected).toBe(false); // the checkbox was not sent
		expect(d.contacts).toEqual([
			{ name: 'Oskar Fenwhistle', title: 'District conservationist', email: 'oskar.fenwhistle@meadowlarkrun.example.org' },
			{ name: 'Lune Abernathy-Cole', email: 'lune.ac@meadowlarkrun.example.org', phone: '515-555-0142' }
		]);
		const counties = (await getDb().selectFrom('district_counties').select('county_fips').where('district_id', '=', id).execute())
			.map((r) => r.county_fips)
			.sort();
		expect(counties).toEqual(['19049', '19099', '19153']);
		const audit = await getDb()
			.selectFrom('audit_log')
			.select('detail')
			.where('action', '=', 'district-updated')
			.orderBy('id', 'desc')
			.executeTakeFirstOrThrow();
		expect(audit.detail).toMatchObject({ counties_added: ['19099'], counties_removed: [] });
	});

	it('an admin adds a district; codes are unique', async () => {
		const res = await postForm('/admin/districts?/create', { code: 'tst1', name: 'Test Creek District', region: '' }, admin);
		expect(res.status).toBe(303);
		expect(res.headers.location).toMatch(/^\/admin\/districts\/\d+\?created=1$/);
		const dup = await postForm('/admin/districts?/create', { code: 'TST1', name: 'Again', region: '' }, admin);
		expect(dup.status).toBe(400);
		expect(dup.text).toContain('Another district already uses this code.');
	});

	it('GET /api/v1/districts: all for the state program, only its own for a district', async () => {
		const all = await (await api()).get('/api/v1/districts').set(bearer(DEMO_TOKENS.manager));
		expect(all.status).toBe(200);
		expect(all.body.items.map((d: { code: string }) => d.code)).toEqual(expect.arrayContaining(['BLH', 'KTP', 'CWB', 'MLR', 'OSF', 'IWR']));
		const own = await (await api()).get('/api/v1/districts').set(bearer(DEMO_TOKENS.district2));
		expect(own.body.items.map((d: { code: string }) => d.code)).toEqual(['KTP']);
		const one = await (await api()).get('/api/v1/districts/ktp').set(bearer(DEMO_TOKENS.district2));
		expect(one.status).toBe(200);
		expect(one.body.counties.map((c: { fips: string }) => c.fips).sort()).toEqual(['19033', '19069', '19081']);
		const other = await (await api()).get('/api/v1/districts/BLH').set(bearer(DEMO_TOKENS.district2));
		expect(other.status).toBe(403);
		expect(other.body.type).toBe('urn:runnel:problem:other-district');
		expect((await (await api()).get('/api/v1/districts/NOPE').set(bearer(DEMO_TOKENS.manager))).status).toBe(404);
	});
});

describe('audit log page', () => {
	it('filters by person and by action, and pages back', async () => {
		const byAction = await (await api()).get('/admin/audit?action=role-changed').set('cookie', admin);
		expect(byAction.status).toBe(200);
		expect(byAction.text).toContain('Role or district changed');
		expect(byAction.text).toContain('<td>Role or district changed</td>');
		expect(byAction.text).not.toContain('<td>Signed in</td>');
		const byUser = await (await api()).get(`/admin/audit?user=${subjectId}`).set('cookie', admin);
		expect(byUser.text).toContain('Admin Subject');
		// More entries than one page holds (50):
		await getDb()
			.insertInto('audit_log')
			.values(
				Array.from({ length: 60 }, (_, i) => ({
					action: 'sign-in',
					actor: `user:${subjectId}`,
					actor_user_id: subjectId,
					subject_user_id: subjectId,
					detail: JSON.stringify({ n: i })
				}))
			)
			.execute();
		const all = await (await api()).get('/admin/audit').set('cookie', admin);
		const older = all.text.match(/href="(\/admin\/audit\?before=\d+)"/)?.[1];
		expect(older).toBeDefined();
		expect((await (await api()).get(older!.replace(/&amp;/g, '&')).set('cookie', admin)).status).toBe(200);
	});

	it('is for admins only', async () => {
		const res = await (await api()).get('/admin/audit').set('cookie', await sessionCookie('manager@runnel.test'));
		expect(res.status).toBe(403);
		expect(res.text).toContain('Your role does not give access to this page.');
		expect(res.text).not.toContain('Audit entries'); // nothing of the page itself
	});
});
