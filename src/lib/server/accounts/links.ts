// One-time e-mail links: invitations (7 days) and password resets (1 hour). The link carries a random
// token; the database keeps only its SHA-256 hash. A link is used at most once: `consumeLink` marks it
// used in the same statement that checks it, so two clicks racing each other cannot both succeed.
import { randomBytes } from 'node:crypto';
import { sql, type Kysely, type Transaction } from 'kysely';
import type { AccountLinkPurpose, Database, Role } from '../db/schema';
import { config } from '../config';
import { hashToken } from '../auth/tokens';

type Db = Kysely<Database> | Transaction<Database>;

export const LINK_LIFETIME_MS: Record<AccountLinkPurpose, number> = {
	invitation: 7 * 24 * 3600_000,
	'password-reset': 3600_000
};

const PATHS: Record<AccountLinkPurpose, string> = {
	invitation: '/accept-invitation/',
	'password-reset': '/reset-password/'
};

export function linkUrl(purpose: AccountLinkPurpose, token: string): string {
	return new URL(PATHS[purpose] + token, config.origin).href;
}

/** Creates a link for a user; earlier unused links of the same purpose stop working. */
export async function createLink(
	db: Db,
	userId: number,
	purpose: AccountLinkPurpose,
	createdBy: number | null
): Promise<{ token: string; url: string; expiresAt: Date }> {
	await expireLinks(db, userId, purpose);
	const token = randomBytes(32).toString('base64url');
	const expiresAt = new Date(Date.now() + LINK_LIFETIME_MS[purpose]);
	await db
		.insertInto('account_links')
		.values({ user_id: userId, purpose, token_hash: hashToken(token), expires_at: expiresAt, created_by: createdBy })
		.execute();
	return { token, url: linkUrl(purpose, token), expiresAt };
}

/** Makes a user's unused links stop working (a newer link was sent, the password changed, the account ended). */
export async function expireLinks(db: Db, userId: number, purpose?: AccountLinkPurpose): Promise<void> {
	let q = db
		.updateTable('account_links')
		.set({ expires_at: sql<Date>`now()` })
		.where('user_id', '=', userId)
		.where('used_at', 'is', null)
		.where('expires_at', '>', sql<Date>`now()`);
	if (purpose) q = q.where('purpose', '=', purpose);
	await q.execute();
}

export interface LinkHolder {
	linkId: string;
	userId: number;
	email: string;
	name: string;
	role: Role;
	districtName: string | null;
	expiresAt: Date;
}

const usable = (purpose: AccountLinkPurpose, token: string) => (db: Db) =>
	db
		.selectFrom('account_links as l')
		.innerJoin('users as u', 'u.id', 'l.user_id')
		.leftJoin('districts as d', 'd.id', 'u.district_id')
		.select(['l.id as linkId', 'u.id as userId', 'u.email', 'u.name', 'u.role', 'd.name as districtName', 'l.expires_at as expiresAt'])
		.where('l.token_hash', '=', hashToken(token))
		.where('l.purpose', '=', purpose)
		.where('l.used_at', 'is', null)
		.where('l.expires_at', '>', sql<Date>`now()`)
		.where('u.active', '=', true);

/** The person a still-usable link belongs to, or null (unknown, used, expired, account deactivated). */
export async function findLink(db: Db, purpose: AccountLinkPurpose, token: string): Promise<LinkHolder | null> {
	if (token.length > 100) return null;
	return (await usable(purpose, token)(db).executeTakeFirst()) ?? null;
}

/** Marks a usable link used and returns its holder; null when it was not usable (e.g. used a moment ago). */
export async function consumeLink(trx: Transaction<Database>, purpose: AccountLinkPurpose, token: string): Promise<LinkHolder | null> {
	const holder = await findLink(trx, purpose, token);
	if (!holder) return null;
	const r = await trx
		.updateTable('account_links')
		.set({ used_at: sql<Date>`now()` })
		.where('id', '=', holder.linkId)
		.where('used_at', 'is', null)
		.executeTakeFirst();
	return Number(r.numUpdatedRows) === 1 ? holder : null;
}

/** How many reset links a user was sent in the last hour (to keep the reset form from mail-bombing). */
export async function recentResetCount(db: Db, userId: number): Promise<number> {
	const r = await db
		.selectFrom('account_links')
		.select((eb) => eb.fn.countAll<string>().as('n'))
		.where('user_id', '=', userId)
		.where('purpose', '=', 'password-reset')
		.where('created_at', '>', sql<Date>`now() - interval '1 hour'`)
		.executeTakeFirstOrThrow();
	return Number(r.n);
}
