// Accounts helpers for API and browser tests: sessions made straight in the database (fast), test
// users, form posts the way a browser sends them, and a clean sign-in throttle.
import { sql } from 'kysely';
import request from 'supertest';
import { hashPassword } from '$lib/server/auth/password';
import { createSession, sessionCookieName } from '$lib/server/auth/sessions';
import { generateToken, hashToken } from '$lib/server/auth/tokens';
import { getDb } from '$lib/server/db';
import type { Role, Scope } from '$lib/domain/scopes';
import { appHandler } from './app';

/** The origin the built app believes it serves (adapter-node reads ORIGIN); forms must come from it. */
export const origin = () => process.env.ORIGIN ?? 'http://127.0.0.1:3000';

export async function userIdOf(email: string): Promise<number> {
	const u = await getDb()
		.selectFrom('users')
		.select('id')
		.where(sql<string>`lower(email)`, '=', email.toLowerCase())
		.executeTakeFirstOrThrow();
	return u.id;
}

/** A fresh session for a user, as a `Cookie` header value. */
export async function sessionCookie(email: string): Promise<string> {
	const s = await createSession(getDb(), await userIdOf(email), { ip: '127.0.0.1', userAgent: 'vitest' });
	return `${sessionCookieName()}=${s.token}`;
}

export async function createUser(opts: {
	email: string;
	name?: string;
	role: Role;
	districtCode?: string;
	password?: string;
}): Promise<number> {
	const db = getDb();
	const districtId = opts.districtCode
		? (await db.selectFrom('districts').select('id').where('code', '=', opts.districtCode).executeTakeFirstOrThrow()).id
		: null;
	const r = await db
		.insertInto('users')
		.values({
			email: opts.email,
			name: opts.name ?? 'Test Person',
			role: opts.role,
			district_id: districtId,
			password_hash: opts.password ? await hashPassword(opts.password) : null
		})
		.returning('id')
		.executeTakeFirstOrThrow();
	return r.id;
}

/** A token made straight in the database (for scopes a test needs, e.g. one lacking a scope). */
export async function createToken(userId: number, scopes: Scope[], name = 'test token'): Promise<string> {
	const token = generateToken();
	await getDb()
		.insertInto('api_tokens')
		.values({ user_id: userId, name, token_hash: hashToken(token), display_prefix: token.slice(0, 8) + '…', scopes })
		.execute();
	return token;
}

/**
 * Forgets sign-in failures (tests share 127.0.0.1, which has its own limit). Accounts named
 * `e2e.…@runnel.test` belong to the browser tests, which may run alongside, and are left alone unless asked.
 */
export async function clearThrottle(opts: { browserAccounts?: boolean } = {}): Promise<void> {
	let q = getDb().deleteFrom('sign_in_throttle');
	if (!opts.browserAccounts) q = q.where('key', 'not like', 'account:e2e.%');
	await q.execute();
}

/** POSTs a form as a browser without JavaScript would (same Origin, Accept: text/html). */
export async function postForm(path: string, fields: Record<string, string | string[]>, cookie?: string) {
	const body = new URLSearchParams();
	for (const [k, v] of Object.entries(fields)) for (const x of Array.isArray(v) ? v : [v]) body.append(k, x);
	let req = request(await appHandler())
		.post(path)
		.set('origin', origin())
		.set('accept', 'text/html')
		.type('form');
	if (cookie) req = req.set('cookie', cookie);
	return req.send(body.toString());
}

/** The session cookie a response set, as a `Cookie` header value (or null). */
export function setCookie(res: { headers: Record<string, unknown> }): string | null {
	const raw = res.headers['set-cookie'];
	const list = Array.isArray(raw) ? (raw as string[]) : typeof raw === 'string' ? [raw] : [];
	const c = list.find((x) => x.startsWith(sessionCookieName() + '=') && !/^[^=]+=;/.test(x));
	return c ? c.split(';')[0] : null;
}

/** The newest queued mail to an address. */
export async function lastMailTo(address: string) {
	return getDb()
		.selectFrom('mail_messages')
		.selectAll()
		.where(sql<boolean>`${address} = any(to_addresses)`)
		.orderBy('id', 'desc')
		.executeTakeFirst();
}

/** The first link to this app in a mail's text. */
export function linkIn(text: string): URL {
	const m = text.match(/https?:\/\/\S+/);
	if (!m) throw new Error('no link in mail');
	return new URL(m[0]);
}
