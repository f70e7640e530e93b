// Server-side sessions in PostgreSQL. The browser holds a random token in an httpOnly cookie; the
// database holds only its SHA-256 hash. A session ends after `sessionIdleMinutes` without a request,
// `sessionMaxHours` after sign-in, on sign-out, on "sign out everywhere", on a password reset and
// when its user is deactivated.
import { randomBytes } from 'node:crypto';
import type { Cookies } from '@sveltejs/kit';
import { sql, type Kysely, type Transaction } from 'kysely';
import { ROLE_SCOPES } from '$lib/domain/scopes';
import { config } from '../config';
import type { Database } from '../db/schema';
import type { Principal } from './principal';
import { hashToken as hash } from './tokens';

type Db = Kysely<Database> | Transaction<Database>;

/** `__Host-` pins the cookie to this exact origin and path `/`; browsers only accept it over https. */
export function sessionCookieName(): string {
	return config.secureCookies ? '__Host-runnel_session' : 'runnel_session';
}

export function setSessionCookie(cookies: Cookies, token: string, expiresAt: Date): void {
	cookies.set(sessionCookieName(), token, {
		path: '/',
		httpOnly: true,
		sameSite: 'lax',
		secure: config.secureCookies,
		expires: expiresAt
	});
}

export function clearSessionCookie(cookies: Cookies): void {
	cookies.delete(sessionCookieName(), { path: '/', httpOnly: true, sameSite: 'lax', secure: config.secureCookies });
}

export interface NewSession {
	id: string;
	token: string;
	expiresAt: Date;
}

export async function createSession(
	db: Db,
	userId: number,
	client: { ip?: string | null; userAgent?: string | null } = {}
): Promise<NewSession> {
	const token = randomBytes(32).toString('base64url');
	const expiresAt = new Date(Date.now() + config.sessionMaxHours * 3600_000);
	const row = await db
		.insertInto('sessions')
		.values({
			user_id: userId,
			token_hash: hash(token),
			expires_at: expiresAt,
			ip: client.ip ?? null,
			user_agent: client.userAgent?.slice(0, 300) ?? null
		})
		.returning('id')
		.executeTakeFirstOrThrow();
	return { id: row.id, token, expiresAt };
}

/** The principal of a live session, or null (unknown, expired, idle too long, user deactivated). */
export async function principalFromSession(db: Kysely<Database>, token: string): Promise<Principal | null> {
	if (token.length > 100) return null;
	const row = await db
		.selectFrom('sessions as s')
		.innerJoin('users as u', 'u.id', 's.user_id')
		.select(['s.id', 's.expires_at', 's.last_seen_at', 'u.id as user_id', 'u.email', 'u.name', 'u.role', 'u.district_id', 'u.active'])
		.where('s.token_hash', '=', hash(token))
		.executeTakeFirst();
	if (!row) return null;
	const now = Date.now();
	const idleMs = config.sessionIdleMinutes * 60_000;
	if (!row.active || row.expires_at.getTime() <= now || now - row.last_seen_at.getTime() > idleMs) {
		await db.deleteFrom('sessions').where('id', '=', row.id).execute();
		return null;
	}
	// Last-seen time at minute resolution, so browsing does not write on every request.
	if (now - row.last_seen_at.getTime() > 60_000) {
		await db
			.updateTable('sessions')
			.set({ last_seen_at: sql<Date>`now()` })
			.where('id', '=', row.id)
			.execute();
	}
	return {
		kind: 'session',
		userId: row.user_id,
		email: row.email,
		name: row.name,
		role: row.role,
		districtId: row.district_id,
		scopes: [...ROLE_SCOPES[row.role]],
		credentialId: row.id,
		expiresAt: new Date(Math.min(row.expires_at.getTime(), Math.max(now, row.last_seen_at.getTime()) + idleMs))
	};
}

export async function endSession(db: Db, sessionId: string, userId?: number): Promise<boolean> {
	let q = db.deleteFrom('sessions').where('id', '=', sessionId);
	if (userId !== undefined) q = q.where('user_id', '=', userId);
	const r = await q.executeTakeFirst();
	return Number(r.numDeletedRows) > 0;
}

/** Ends every session of a user (optionally keeping one); returns how many ended. */
export async function endAllSessions(db: Db, userId: number, keepSessionId?: string): Promise<number> {
	let q = db.deleteFrom('sessions').where('user_id', '=', userId);
	if (keepSessionId) q = q.where('id', '!=', keepSessionId);
	const r = await q.executeTakeFirst();
	return Number(r.numDeletedRows);
}

export async function listSessions(db: Db, userId: number) {
	const idle = `${config.sessionIdleMinutes} minutes`;
	return db
		.selectFrom('sessions')
		.select(['id', 'created_at', 'last_seen_at', 'expires_at', 'ip', 'user_agent'])
		.where('user_id', '=', userId)
		.where('expires_at', '>', sql<Date>`now()`)
		.where('last_seen_at', '>', sql<Date>`now() - ${idle}::interval`)
		.orderBy('last_seen_at', 'desc')
		.execute();
}

/** Removes sessions that can no longer be used (called now and then, e.g. at sign-in). */
export async function deleteExpiredSessions(db: Db): Promise<void> {
	const idle = `${config.sessionIdleMinutes} minutes`;
	await db
		.deleteFrom('sessions')
		.where((eb) => eb.or([eb('expires_at', '<=', sql<Date>`now()`), eb('last_seen_at', '<=', sql<Date>`now() - ${idle}::interval`)]))
		.execute();
}
