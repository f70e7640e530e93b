// What each role's home page shows about accounts and districts. Areas built later add their own
// summaries beside these (batches to check, records to review, dataset releases…).
import { sql, type Kysely } from 'kysely';
import type { Database } from '../db/schema';
import type { Principal } from '../auth/principal';
import { listAudit } from './audit';
import { listDistricts } from './districts';

export async function adminHome(db: Kysely<Database>) {
	const [counts, recent] = await Promise.all([
		db
			.selectFrom('users')
			.select((eb) => [
				eb.fn.count<string>('id').filterWhere('active', '=', true).filterWhere('password_hash', 'is not', null).as('active'),
				eb.fn.count<string>('id').filterWhere('active', '=', true).filterWhere('password_hash', 'is', null).as('invited'),
				eb
					.selectFrom('api_tokens')
					.select((e) => e.fn.countAll<string>().as('n'))
					.where('revoked_at', 'is', null)
					.where((e) => e.or([e('expires_at', 'is', null), e('expires_at', '>', sql<Date>`now()`)]))
					.as('tokens'),
				eb
					.selectFrom('audit_log')
					.select((e) => e.fn.countAll<string>().as('n'))
					.where('action', '=', 'sign-in-failed')
					.where('at', '>', sql<Date>`now() - interval '24 hours'`)
					.as('failures'),
				eb
					.selectFrom('districts')
					.select((e) => e.fn.countAll<string>().as('n'))
					.as('districts')
			])
			.executeTakeFirstOrThrow(),
		listAudit(db, { limit: 5 })
	]);
	return {
		activeUsers: Number(counts.active),
		pendingInvitations: Number(counts.invited),
		liveTokens: Number(counts.tokens ?? 0),
		failedSignIns24h: Number(counts.failures ?? 0),
		districts: Number(counts.districts ?? 0),
		recent: recent.rows
	};
}

export async function districtsOverview(db: Kysely<Database>, p: Principal) {
	return (await listDistricts(db, { onlyId: p.districtId })).map((d) => ({
		code: d.code,
		name: d.name,
		region: d.region,
		counties: d.counties.map((c) => c.name),
		contacts: d.contacts
	}));
}

export async function liveTokenCount(db: Kysely<Database>, userId: number | null): Promise<number> {
	if (userId === null) return 0;
	const r = await db
		.selectFrom('api_tokens')
		.select((e) => e.fn.countAll<string>().as('n'))
		.where('user_id', '=', userId)
		.where('revoked_at', 'is', null)
		.where((e) => e.or([e('expires_at', 'is', null), e('expires_at', '>', sql<Date>`now()`)]))
		.executeTakeFirstOrThrow();
	return Number(r.n);
}
