// Personal API tokens: create (the secret is returned once and never stored), list, revoke.
// Resolving a bearer token to a principal lives in ../auth/tokens.ts.
import { sql, type Kysely, type Transaction } from 'kysely';
import { checkRequestedScopes, ROLE_SCOPES, type Scope } from '$lib/domain/scopes';
import type { Database, Role } from '../db/schema';
import type { Principal } from '../auth/principal';
import { displayPrefix, generateToken, hashToken } from '../auth/tokens';
import { recordAudit } from './audit';

type Db = Kysely<Database> | Transaction<Database>;

export type TokenStatus = 'active' | 'expired' | 'revoked' | 'suspended';

export interface TokenRow {
	id: number;
	name: string;
	prefix: string;
	scopes: string[];
	createdAt: Date;
	lastUsedAt: Date | null;
	expiresAt: Date | null;
	revokedAt: Date | null;
	status: TokenStatus;
	owner: { id: number; name: string; email: string; role: Role; active: boolean };
}

export function tokenStatus(t: { revoked_at: Date | null; expires_at: Date | null }, ownerActive: boolean, now = Date.now()): TokenStatus {
	if (t.revoked_at) return 'revoked';
	if (t.expires_at && t.expires_at.getTime() <= now) return 'expired';
	if (!ownerActive) return 'suspended';
	return 'active';
}

export async function createApiToken(
	db: Kysely<Database>,
	opts: { userId: number; name: string; scopes: Scope[]; expiresAt: Date | null; actor: Principal; ip: string | null }
): Promise<{ id: number; token: string; row: TokenRow }> {
	const token = generateToken();
	const id = await db.transaction().execute(async (trx) => {
		const r = await trx
			.insertInto('api_tokens')
			.values({
				user_id: opts.userId,
				name: opts.name,
				token_hash: hashToken(token),
				display_prefix: displayPrefix(token),
				scopes: opts.scopes,
				expires_at: opts.expiresAt
			})
			.returning('id')
			.executeTakeFirstOrThrow();
		await recordAudit(trx, {
			action: 'token-created',
			actor: opts.actor,
			subjectUserId: opts.userId,
			ip: opts.ip,
			detail: { token: r.id, name: opts.name, scopes: opts.scopes, expires_at: opts.expiresAt?.toISOString() ?? null }
		});
		return r.id;
	});
	const row = (await getApiToken(db, id))!;
	return { id, token, row };
}

function baseQuery(db: Db) {
	return db
		.selectFrom('api_tokens as t')
		.innerJoin('users as u', 'u.id', 't.user_id')
		.select([
			't.id',
			't.name',
			't.display_prefix',
			't.scopes',
			't.created_at',
			't.last_used_at',
			't.expires_at',
			't.revoked_at',
			'u.id as owner_id',
			'u.name as owner_name',
			'u.email as owner_email',
			'u.role as owner_role',
			'u.active as owner_active'
		]);
}

type Raw = Awaited<ReturnType<ReturnType<typeof baseQuery>['executeTakeFirstOrThrow']>>;

function toRow(r: Raw): TokenRow {
	return {
		id: r.id,
		name: r.name,
		prefix: r.display_prefix,
		// A token never acts beyond its owner's current role, whatever it was created with.
		scopes: r.scopes.filter((s) => (ROLE_SCOPES[r.owner_role] as readonly string[]).includes(s)),
		createdAt: r.created_at,
		lastUsedAt: r.last_used_at,
		expiresAt: r.expires_at,
		revokedAt: r.revoked_at,
		status: tokenStatus(r, r.owner_active),
		owner: { id: r.owner_id, name: r.owner_name, email: r.owner_email, role: r.owner_role, active: r.owner_active }
	};
}

export async function getApiToken(db: Db, id: number): Promise<TokenRow | null> {
	const r = await baseQuery(db).where('t.id', '=', id).executeTakeFirst();
	return r ? toRow(r) : null;
}

/** Newest first, keyset-paginated by id. `activeOnly` leaves out revoked and expired tokens. */
export async function listApiTokens(
	db: Db,
	opts: { userId?: number; activeOnly?: boolean; before?: number; limit: number }
): Promise<{ rows: TokenRow[]; nextBefore: number | null }> {
	let q = baseQuery(db);
	if (opts.userId !== undefined) q = q.where('t.user_id', '=', opts.userId);
	if (opts.activeOnly) {
		q = q
			.where('t.revoked_at', 'is', null)
			.where((eb) => eb.or([eb('t.expires_at', 'is', null), eb('t.expires_at', '>', sql<Date>`now()`)]));
	}
	if (opts.before !== undefined) q = q.where('t.id', '<', opts.before);
	const raw = await q
		.orderBy('t.id', 'desc')
		.limit(opts.limit + 1)
		.execute();
	const more = raw.length > opts.limit;
	const rows = (more ? raw.slice(0, opts.limit) : raw).map(toRow);
	return { rows, nextBefore: more ? rows[rows.length - 1].id : null };
}

/** Revokes a token (only the owner's own when `ownerId` is given). False when there is no such live token. */
export async function revokeApiToken(
	db: Kysely<Database>,
	id: number,
	opts: { ownerId?: number; actor: Principal; ip: string | null }
): Promise<boolean> {
	return db.transaction().execute(async (trx) => {
		let q = trx
			.updateTable('api_tokens')
			.set({ revoked_at: sql<Date>`now()` })
			.where('id', '=', id)
			.where('revoked_at', 'is', null);
		if (opts.ownerId !== undefined) q = q.where('user_id', '=', opts.ownerId);
		const r = await q.returning(['user_id', 'name']).executeTakeFirst();
		if (!r) return false;
		await recordAudit(trx, {
			action: 'token-revoked',
			actor: opts.actor,
			subjectUserId: r.user_id,
			ip: opts.ip,
			detail: { token: id, name: r.name }
		});
		return true;
	});
}

export type OwnTokenRefusal = { ok: false; field: 'scopes' | 'expires_at' | '_form'; message: string; refused?: string[] };

/**
 * A person creates a token for themselves. Its scopes must be a subset of what the caller holds right
 * now (the role's scopes for a session; the calling token's own scopes for a token), and a token cannot
 * outlive the token that created it.
 */
export async function createOwnToken(
	db: Kysely<Database>,
	caller: Principal,
	input: { name: string; scopes: string[]; expiresAt: Date | null },
	ip: string | null
): Promise<{ ok: true; id: number; token: string; row: TokenRow } | OwnTokenRefusal> {
	if (caller.userId === null) return { ok: false, field: '_form', message: 'Only people have personal API tokens; OAuth clients do not.' };
	const { ok, refused } = checkRequestedScopes(caller.role, input.scopes);
	const beyondCaller = ok.filter((s) => !caller.scopes.includes(s));
	const notAllowed = [...refused, ...beyondCaller];
	if (notAllowed.length > 0) {
		return {
			ok: false,
			field: 'scopes',
			refused: notAllowed,
			message: `Not a scope you can grant: ${notAllowed.join(', ')}. You can grant: ${caller.scopes.join(', ') || 'none'}.`
		};
	}
	if (ok.length === 0) return { ok: false, field: 'scopes', message: 'Choose at least one scope.' };
	if (input.expiresAt && input.expiresAt.getTime() <= Date.now())
		return { ok: false, field: 'expires_at', message: 'The expiry must be in the future.' };
	const expiresAt = input.expiresAt;
	if (caller.kind === 'token' && caller.expiresAt) {
		if (!expiresAt || expiresAt > caller.expiresAt) {
			return {
				ok: false,
				field: 'expires_at',
				message: `A token cannot outlive the token that creates it (${caller.expiresAt.toISOString()}).`
			};
		}
	}
	const created = await createApiToken(db, { userId: caller.userId, name: input.name, scopes: ok, expiresAt, actor: caller, ip });
	return { ok: true, ...created };
}
