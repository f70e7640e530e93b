// OAuth clients for district IT (RFC 6749 §4.4 client-credentials grant): registered by an admin for
// one district with a subset of the district role's scopes. The secret is shown once and stored as a
// SHA-256 hash (it is 256 random bits, so a fast hash is enough, as for personal API tokens).
import { createHash, randomBytes, timingSafeEqual } from 'node:crypto';
import { sql, type Kysely } from 'kysely';
import { ROLE_SCOPES, type Scope } from '$lib/domain/scopes';
import type { Database, OAuthClient } from '../db/schema';

export const CLIENT_ID_PREFIX = 'rnlc_';
export const CLIENT_SECRET_PREFIX = 'rnlcs_';

export function hashClientSecret(secret: string): string {
	return createHash('sha256').update(secret, 'utf8').digest('hex');
}

export interface RegisteredClient {
	client: OAuthClient;
	/** Shown once; only its hash is kept. */
	clientSecret: string;
}

export async function registerClient(
	db: Kysely<Database>,
	input: { name: string; districtId: number; scopes: string[]; createdBy: number | null }
): Promise<RegisteredClient> {
	const allowed = ROLE_SCOPES.district;
	const scopes = [...new Set(input.scopes)];
	const foreign = scopes.filter((s) => !allowed.includes(s as Scope));
	if (foreign.length > 0) throw new Error(`scopes not allowed for a district client: ${foreign.join(', ')}`);
	if (scopes.length === 0) throw new Error('a client needs at least one scope');
	const clientId = CLIENT_ID_PREFIX + randomBytes(12).toString('base64url');
	const clientSecret = CLIENT_SECRET_PREFIX + randomBytes(32).toString('base64url');
	const client = await db
		.insertInto('oauth_clients')
		.values({
			client_id: clientId,
			name: input.name,
			district_id: input.districtId,
			scopes,
			secret_hash: hashClientSecret(clientSecret),
			created_by: input.createdBy
		})
		.returningAll()
		.executeTakeFirstOrThrow();
	return { client, clientSecret };
}

export interface ClientListItem {
	id: number;
	clientId: string;
	name: string;
	districtId: number;
	districtName: string;
	scopes: string[];
	createdAt: Date;
	createdBy: string | null;
	lastUsedAt: Date | null;
	revokedAt: Date | null;
}

export async function listClients(db: Kysely<Database>): Promise<ClientListItem[]> {
	const rows = await db
		.selectFrom('oauth_clients as c')
		.innerJoin('districts as d', 'd.id', 'c.district_id')
		.leftJoin('users as u', 'u.id', 'c.created_by')
		.select([
			'c.id',
			'c.client_id',
			'c.name',
			'c.district_id',
			'd.name as district_name',
			'c.scopes',
			'c.created_at',
			'u.name as created_by_name',
			'c.last_used_at',
			'c.revoked_at'
		])
		.orderBy(sql`c.revoked_at is null`, 'desc')
		.orderBy('c.created_at', 'desc')
		.execute();
	return rows.map((r) => ({
		id: r.id,
		clientId: r.client_id,
		name: r.name,
		districtId: r.district_id,
		districtName: r.district_name,
		scopes: r.scopes,
		createdAt: r.created_at,
		createdBy: r.created_by_name,
		lastUsedAt: r.last_used_at,
		revokedAt: r.revoked_at
	}));
}

/** Revokes a client: new tokens are refused and tokens already issued stop working at once. */
export async function revokeClient(db: Kysely<Database>, id: number): Promise<boolean> {
	const r = await db
		.updateTable('oauth_clients')
		.set({ revoked_at: sql`now()` as unknown as Date })
		.where('id', '=', id)
		.where('revoked_at', 'is', null)
		.executeTakeFirst();
	return Number(r.numUpdatedRows) > 0;
}

/** The active client with this id and secret, or null (unknown, revoked or wrong secret; same work either way). */
export async function authenticateClient(db: Kysely<Database>, clientId: string, secret: string): Promise<OAuthClient | null> {
	const row =
		clientId.length <= 100
			? await db.selectFrom('oauth_clients').selectAll().where('client_id', '=', clientId).executeTakeFirst()
			: undefined;
	const given = Buffer.from(hashClientSecret(secret), 'hex');
	const expected = Buffer.from(row?.secret_hash ?? '0'.repeat(64), 'hex');
	const match = timingSafeEqual(given, expected);
	if (!row || !match || row.revoked_at) return null;
	return row;
}

/** An active client by its client_id (for access-token verification). */
export async function activeClient(db: Kysely<Database>, clientId: string): Promise<OAuthClient | null> {
	if (clientId.length > 100) return null;
	const row = await db
		.selectFrom('oauth_clients')
		.selectAll()
		.where('client_id', '=', clientId)
		.where('revoked_at', 'is', null)
		.executeTakeFirst();
	return row ?? null;
}

export async function touchClient(db: Kysely<Database>, id: number): Promise<void> {
	await db
		.updateTable('oauth_clients')
		.set({ last_used_at: sql`now()` as unknown as Date })
		.where('id', '=', id)
		.execute();
}
