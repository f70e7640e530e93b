// People: invitations, role and district changes, deactivation, and the password flows (change,
// reset by e-mail link, first password from an invitation). Every change writes an audit row.
import { sql, type Kysely } from 'kysely';
import type { Role } from '$lib/domain/scopes';
import type { Database } from '../db/schema';
import type { Principal } from '../auth/principal';
import { hashPassword, verifyPassword } from '../auth/password';
import { createSession, endAllSessions, type NewSession } from '../auth/sessions';
import { clearAccountThrottle } from '../auth/throttle';
import { queueMail } from '../mail/queue';
import { recordAudit } from './audit';
import { consumeLink, createLink, expireLinks, findLink, recentResetCount } from './links';
import { invitationMail, passwordResetMail } from './mail';

type Db = Kysely<Database>;

export type UserStatus = 'active' | 'invited' | 'deactivated';

export interface UserRow {
	id: number;
	email: string;
	name: string;
	role: Role;
	districtId: number | null;
	districtName: string | null;
	status: UserStatus;
	createdAt: Date;
	lastSignInAt: Date | null;
}

const statusOf = (u: { active: boolean; password_hash: string | null }): UserStatus =>
	!u.active ? 'deactivated' : u.password_hash === null ? 'invited' : 'active';

function usersQuery(db: Db) {
	return db
		.selectFrom('users as u')
		.leftJoin('districts as d', 'd.id', 'u.district_id')
		.select([
			'u.id',
			'u.email',
			'u.name',
			'u.role',
			'u.district_id',
			'u.active',
			'u.password_hash',
			'u.created_at',
			'u.last_sign_in_at',
			'd.name as district_name'
		]);
}

function toRow(u: Awaited<ReturnType<ReturnType<typeof usersQuery>['executeTakeFirstOrThrow']>>): UserRow {
	return {
		id: u.id,
		email: u.email,
		name: u.name,
		role: u.role,
		districtId: u.district_id,
		districtName: u.district_name,
		status: statusOf(u),
		createdAt: u.created_at,
		lastSignInAt: u.last_sign_in_at
	};
}

export async function listUsers(db: Db): Promise<UserRow[]> {
	return (await usersQuery(db).orderBy('u.active', 'desc').orderBy('u.name').execute()).map(toRow);
}

export async function getUser(db: Db, id: number): Promise<UserRow | null> {
	const u = await usersQuery(db).where('u.id', '=', id).executeTakeFirst();
	return u ? toRow(u) : null;
}

export type Refusal = { ok: false; field: string; message: string };

const isUniqueViolation = (e: unknown) => typeof e === 'object' && e !== null && (e as { code?: string }).code === '23505';

async function districtName(db: Db, id: number | null): Promise<string | null> {
	if (id === null) return null;
	const d = await db.selectFrom('districts').select('name').where('id', '=', id).executeTakeFirst();
	return d?.name ?? null;
}

export async function inviteUser(
	db: Db,
	input: { name: string; email: string; role: Role; district_id: number | null },
	actor: Principal,
	ip: string | null
): Promise<{ ok: true; userId: number } | Refusal> {
	const dName = await districtName(db, input.district_id);
	if (input.district_id !== null && dName === null) return { ok: false, field: 'district_id', message: 'Choose a district from the list.' };
	try {
		const userId = await db.transaction().execute(async (trx) => {
			const u = await trx
				.insertInto('users')
				.values({ email: input.email, name: input.name, role: input.role, district_id: input.district_id, password_hash: null })
				.returning('id')
				.executeTakeFirstOrThrow();
			const link = await createLink(trx, u.id, 'invitation', actor.userId);
			await queueMail(
				trx,
				invitationMail({
					to: input.email,
					name: input.name,
					role: input.role,
					districtName: dName,
					invitedBy: actor.name,
					url: link.url,
					expiresAt: link.expiresAt
				})
			);
			await recordAudit(trx, {
				action: 'invitation-sent',
				actor,
				subjectUserId: u.id,
				ip,
				detail: { email: input.email, role: input.role, district: dName }
			});
			return u.id;
		});
		return { ok: true, userId };
	} catch (e) {
		if (isUniqueViolation(e)) return { ok: false, field: 'email', message: 'Someone already has an account with this e-mail address.' };
		throw e;
	}
}

/** Sends a fresh invitation link to someone who has not accepted yet (the old link stops working). */
export async function resendInvitation(db: Db, userId: number, actor: Principal, ip: string | null): Promise<boolean> {
	const u = await getUser(db, userId);
	if (!u || u.status !== 'invited') return false;
	await db.transaction().execute(async (trx) => {
		const link = await createLink(trx, u.id, 'invitation', actor.userId);
		await queueMail(
			trx,
			invitationMail({
				to: u.email,
				name: u.name,
				role: u.role,
				districtName: u.districtName,
				invitedBy: actor.name,
				url: link.url,
				expiresAt: link.expiresAt
			})
		);
		await recordAudit(trx, { action: 'invitation-sent', actor, subjectUserId: u.id, ip, detail: { email: u.email, resent: true } });
	});
	return true;
}

export async function updateUser(
	db: Db,
	userId: number,
	input: { name: string; role: Role; district_id: number | null },
	actor: Principal,
	ip: string | null
): Promise<{ ok: true } | Refusal> {
	const before = await getUser(db, userId);
	if (!before) return { ok: false, field: '_form', message: 'There is no such user.' };
	const roleChanged = before.role !== input.role || before.districtId !== input.district_id;
	if (roleChanged && actor.userId === userId)
		return { ok: false, field: 'role', message: 'You cannot change your own role; ask another administrator.' };
	const dName = await districtName(db, input.district_id);
	if (input.district_id !== null && dName === null) return { ok: false, field: 'district_id', message: 'Choose a district from the list.' };
	await db.transaction().execute(async (trx) => {
		await trx
			.updateTable('users')
			.set({ name: input.name, role: input.role, district_id: input.district_id })
			.where('id', '=', userId)
			.execute();
		if (roleChanged) {
			await recordAudit(trx, {
				action: 'role-changed',
				actor,
				subjectUserId: userId,
				ip,
				detail: { from: { role: before.role, district: before.districtName }, to: { role: input.role, district: dName } }
			});
		}
		if (before.name !== input.name) {
			await recordAudit(trx, {
				action: 'user-updated',
				actor,
				subjectUserId: userId,
				ip,
				detail: { from: { name: before.name }, to: { name: input.name } }
			});
		}
	});
	return { ok: true };
}

/**
 * Deactivating ends the user's sessions at once and makes their links unusable; their API tokens stop
 * working while the account is deactivated (principalFromApiToken checks `active`).
 */
export async function setActive(
	db: Db,
	userId: number,
	active: boolean,
	actor: Principal,
	ip: string | null
): Promise<{ ok: true } | Refusal> {
	if (actor.userId === userId && !active) return { ok: false, field: '_form', message: 'You cannot deactivate your own account.' };
	const found = await db.transaction().execute(async (trx) => {
		const r = await trx
			.updateTable('users')
			.set({ active })
			.where('id', '=', userId)
			.where('active', '=', !active)
			.returning('id')
			.executeTakeFirst();
		if (!r) return false;
		let sessionsEnded = 0;
		if (!active) {
			sessionsEnded = await endAllSessions(trx, userId);
			await expireLinks(trx, userId);
		}
		await recordAudit(trx, {
			action: active ? 'user-reactivated' : 'user-deactivated',
			actor,
			subjectUserId: userId,
			ip,
			detail: active ? {} : { sessions_ended: sessionsEnded }
		});
		return true;
	});
	return found
		? { ok: true }
		: { ok: false, field: '_form', message: active ? 'This account is already active.' : 'This account is already deactivated.' };
}

/** Changes one's own password; other sessions end (the current one stays). */
export async function changePassword(
	db: Db,
	principal: Principal,
	current: string,
	next: string,
	ip: string | null
): Promise<{ ok: true; sessionsEnded: number } | Refusal> {
	const u = await db.selectFrom('users').select(['id', 'password_hash']).where('id', '=', principal.userId!).executeTakeFirstOrThrow();
	if (!(await verifyPassword(current, u.password_hash)))
		return { ok: false, field: 'current', message: 'This is not your current password.' };
	const hash = await hashPassword(next);
	const keep = principal.kind === 'session' ? principal.credentialId : undefined;
	const sessionsEnded = await db.transaction().execute(async (trx) => {
		await trx.updateTable('users').set({ password_hash: hash }).where('id', '=', u.id).execute();
		const n = await endAllSessions(trx, u.id, keep);
		await expireLinks(trx, u.id, 'password-reset');
		await recordAudit(trx, { action: 'password-changed', actor: principal, subjectUserId: u.id, ip, detail: { other_sessions_ended: n } });
		return n;
	});
	return { ok: true, sessionsEnded };
}

/** At most this many reset mails per account per hour; further requests get the same answer but no mail. */
export const RESET_MAILS_PER_HOUR = 3;

/**
 * The "forgot password" request. Always answers the same way whether or not the address has an account
 * (the caller shows one message); a mail goes out only for an active account.
 */
export async function requestPasswordReset(db: Db, email: string, ip: string | null): Promise<void> {
	const u = await db
		.selectFrom('users')
		.select(['id', 'email', 'name', 'active'])
		.where(sql<string>`lower(email)`, '=', email.toLowerCase())
		.executeTakeFirst();
	if (!u || !u.active) return;
	if ((await recentResetCount(db, u.id)) >= RESET_MAILS_PER_HOUR) return;
	await db.transaction().execute(async (trx) => {
		const link = await createLink(trx, u.id, 'password-reset', null);
		await queueMail(trx, passwordResetMail({ to: u.email, name: u.name, url: link.url, expiresAt: link.expiresAt }));
		await recordAudit(trx, { action: 'password-reset-requested', actor: null, subjectUserId: u.id, ip });
	});
}

/** Sets a new password from a reset link; ends every session of the account. Null when the link is not usable. */
export async function resetPassword(db: Db, token: string, password: string, ip: string | null): Promise<{ email: string } | null> {
	if (!(await findLink(db, 'password-reset', token))) return null;
	const hash = await hashPassword(password);
	const done = await db.transaction().execute(async (trx) => {
		const holder = await consumeLink(trx, 'password-reset', token);
		if (!holder) return null;
		await trx.updateTable('users').set({ password_hash: hash }).where('id', '=', holder.userId).execute();
		const n = await endAllSessions(trx, holder.userId);
		await expireLinks(trx, holder.userId, 'password-reset');
		await recordAudit(trx, {
			action: 'password-reset',
			actor: null,
			actorUserId: holder.userId,
			subjectUserId: holder.userId,
			ip,
			detail: { sessions_ended: n }
		});
		return holder;
	});
	if (done) await clearAccountThrottle(db, done.email);
	return done ? { email: done.email } : null;
}

/** Sets the first password from an invitation link and signs the person in. Null when the link is not usable. */
export async function acceptInvitation(
	db: Db,
	token: string,
	password: string,
	client: { ip: string | null; userAgent: string | null }
): Promise<NewSession | null> {
	if (!(await findLink(db, 'invitation', token))) return null;
	const hash = await hashPassword(password);
	return db.transaction().execute(async (trx) => {
		const holder = await consumeLink(trx, 'invitation', token);
		if (!holder) return null;
		await trx
			.updateTable('users')
			.set({ password_hash: hash, last_sign_in_at: sql<Date>`now()` })
			.where('id', '=', holder.userId)
			.execute();
		const session = await createSession(trx, holder.userId, client);
		await recordAudit(trx, {
			action: 'invitation-accepted',
			actor: null,
			actorUserId: holder.userId,
			subjectUserId: holder.userId,
			ip: client.ip
		});
		await recordAudit(trx, {
			action: 'sign-in',
			actor: null,
			actorUserId: holder.userId,
			subjectUserId: holder.userId,
			ip: client.ip,
			detail: { session: session.id }
		});
		return session;
	});
}
