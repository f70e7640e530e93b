// The demo scenario: fictional districts, people and tokens in real Iowa counties (FIPS 19).
// Created only in demo mode (RUNNEL_DEMO=1, set by `npm start` unless RUNNEL_DEMO=0). Idempotent.
import { sql, type Kysely } from 'kysely';
import { hashPassword } from '../src/lib/server/auth/password';
import { hashToken } from '../src/lib/server/auth/tokens';
import { ROLE_SCOPES, type Role } from '../src/lib/domain/scopes';
import type { Database } from '../src/lib/server/db/schema';

export const DEMO_PASSWORD = 'runnel-demo';

/** Six fictional districts; every name and person here is invented. Counties are real Iowa counties. */
export const DEMO_DISTRICTS = [
	{
		code: 'BLH',
		name: 'Bluestem Hills Conservation District',
		region: 'North Iowa',
		counties: ['19109', '19063', '19147'],
		contact: ['Mara Quillfeather', 'mara.quillfeather@bluestem.example.org']
	},
	{
		code: 'KTP',
		name: 'Kettle Prairie Conservation District',
		region: 'North Iowa',
		counties: ['19033', '19069', '19081'],
		contact: ['Ansel Brindlewood', 'ansel.brindlewood@kettleprairie.example.org']
	},
	{
		code: 'CWB',
		name: 'Cottonwood Bend Conservation District',
		region: 'Central Iowa',
		counties: ['19169', '19015', '19079'],
		contact: ['Tamsin Orchardley', 'tamsin.orchardley@cottonwoodbend.example.org']
	},
	{
		code: 'MLR',
		name: 'Meadowlark Run Conservation District',
		region: 'Central Iowa',
		counties: ['19153', '19049'],
		contact: ['Oskar Fenwhistle', 'oskar.fenwhistle@meadowlarkrun.example.org']
	},
	{
		code: 'OSF',
		name: 'Osprey Flats Conservation District',
		region: 'South Iowa',
		counties: ['19103', '19183', '19095'],
		contact: ['Delphine Harrowgate', 'delphine.harrowgate@ospreyflats.example.org']
	},
	{
		code: 'IWR',
		name: 'Ironweed Ridge Conservation District',
		region: 'South Iowa',
		counties: ['19001', '19121', '19181'],
		contact: ['Corwin Ashvale', 'corwin.ashvale@ironweedridge.example.org']
	}
] as const;

export const DEMO_USERS: Array<{ email: string; name: string; role: Role; district?: string; token: string }> = [
	{ email: 'admin@runnel.test', name: 'Wren Adeyemi-Holt', role: 'admin', token: 'rnl_demo_admin' },
	{ email: 'manager@runnel.test', name: 'Jonah Pettigrew-Sato', role: 'manager', token: 'rnl_demo_manager' },
	{ email: 'district@runnel.test', name: 'Mara Quillfeather', role: 'district', district: 'BLH', token: 'rnl_demo_district' },
	{ email: 'district2@runnel.test', name: 'Ansel Brindlewood', role: 'district', district: 'KTP', token: 'rnl_demo_district2' },
	{ email: 'researcher@runnel.test', name: 'Ines Calloway-Rusk', role: 'researcher', token: 'rnl_demo_researcher' }
];

/** The dashboard's state goal in the demo: an invented number, labelled as such wherever it shows. */
export const DEMO_STATE_GOAL = { n_lb_per_yr: 120_000, label: 'Demo goal, invented for the demo scenario', demo: true };

export async function seedDemo(db: Kysely<Database>): Promise<void> {
	await db
		.insertInto('settings')
		.values({ key: 'state_goal', value: JSON.stringify(DEMO_STATE_GOAL) })
		.onConflict((oc) => oc.column('key').doNothing())
		.execute();
	const districtIds = new Map<string, number>();
	for (const d of DEMO_DISTRICTS) {
		const row = await db
			.insertInto('districts')
			.values({
				code: d.code,
				name: d.name,
				region: d.region,
				contacts: JSON.stringify([{ name: d.contact[0], email: d.contact[1], title: 'District conservationist' }])
			})
			.onConflict((oc) => oc.column('code').doUpdateSet({ name: sql`excluded.name`, region: sql`excluded.region` }))
			.returning('id')
			.executeTakeFirstOrThrow();
		districtIds.set(d.code, row.id);
		await db
			.insertInto('district_counties')
			.values(d.counties.map((c) => ({ district_id: row.id, county_fips: c })))
			.onConflict((oc) => oc.columns(['district_id', 'county_fips']).doNothing())
			.execute();
	}

	const passwordHash = await hashPassword(DEMO_PASSWORD);
	for (const u of DEMO_USERS) {
		const existing = await db
			.selectFrom('users')
			.select('id')
			.where(sql`lower(email)`, '=', u.email.toLowerCase())
			.executeTakeFirst();
		const userId =
			existing?.id ??
			(
				await db
					.insertInto('users')
					.values({
						email: u.email,
						name: u.name,
						role: u.role,
						district_id: u.district ? districtIds.get(u.district)! : null,
						password_hash: passwordHash
					})
					.returning('id')
					.executeTakeFirstOrThrow()
			).id;
		await db
			.insertInto('api_tokens')
			.values({
				user_id: userId,
				name: 'Demo token',
				token_hash: hashToken(u.token),
				display_prefix: u.token,
				scopes: [...ROLE_SCOPES[u.role]]
			})
			.onConflict((oc) => oc.column('token_hash').doNothing())
			.execute();
	}
}
