// Personal API tokens: opaque `rnl_` strings, stored only as SHA-256 hashes.
import { createHash, randomBytes } from 'node:crypto';
import { sql, type Kysely } from 'kysely';
import type { Database } from '../db/schema';
import { isScope, ROLE_SCOPES, type Scope } from '$lib/domain/scopes';
import type { Principal } from './principal';

export const TOKEN_PREFIX = 'rnl_';

export function hashToken(token: string): string {
	return createHash('sha256').update(token, 'utf8').digest('hex');
}

export function generateToken(): string {
	return TOKEN_PREFIX + randomBytes(24).toString('base64url');
}

/** What the UI shows of a token after creation: its prefix and a few characters. */
export function displayPrefix(token: string): string {
	return token.slice(0, TOKEN_PREFIX.length + 4) + '…';
}

/** Resolves a bearer token to its principal, or null when unknown, revoked, expired or the user is inactive. */
export async function principalFromApiToken(db: Kysely<Database>, token: string): Promise<Principal | null> {
	if (!token.startsWith(TOKEN_PREFIX) || token.length > 200) return null;
	const row = await db
		.selectFrom('api_tokens as t')
		.innerJoin('users as u', 'u.id', 't.user_id')
		.select([
			't.id',
			't.scopes',
			't.expires_at',
			't.revoked_at',
			't.last_used_at',
			'u.id as user_id',
			'u.email',
			'u.name',
			'u.role',
			'u.district_id',
			'u.active'
		])
		.where('t.token_hash', '=', hashToken(token))
		.executeTakeFirst();
	if (!row || row.revoked_at || !row.active) return null;
	if (row.expires_at && row.expires_at.getTime() <= Date.now()) return null;
	// Last-used time at minute resolution, so a busy script does not write on every request.
	if (!row.last_used_at || Date.now() - row.last_used_at.getTime() > 60_000) {
		await db
			.updateTable('api_tokens')
			.set({ last_used_at: sql`now()` as unknown as Date })
			.where('id', '=', row.id)
			.execute();
	}
	const roleScopes = ROLE_SCOPES[row.role];
	const scopes = row.scopes.filter((s): s is Scope => isScope(s) && roleScopes.includes(s));
	return {
		kind: 'token',
		userId: row.user_id,
		email: row.email,
		name: row.name,
		role: row.role,
		districtId: row.district_id,
		scopes,
		credentialId: String(row.id),
		expiresAt: row.expires_at
	};
}
