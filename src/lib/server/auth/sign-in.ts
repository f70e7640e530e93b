// Password sign-in, shared by the /sign-in form and POST /api/v1/sessions: throttle per account and per
// client address, check the password (an unknown e-mail is checked against a dummy hash, so it takes
// the same time and gets the same answer), open a session, and write the audit row either way.
import { sql, type Kysely } from 'kysely';
import type { Database } from '../db/schema';
import { recordAudit } from '../accounts/audit';
import { verifyPassword } from './password';
import { createSession, deleteExpiredSessions, type NewSession } from './sessions';
import { accountKey, ipKey, pruneThrottle, releaseAttempt, reserveAttempt } from './throttle';

export type SignInOutcome =
	| { ok: true; userId: number; session: NewSession }
	| { ok: false; reason: 'invalid' }
	| { ok: false; reason: 'deactivated' }
	| { ok: false; reason: 'throttled'; retryAfter: number };

export interface SignInInput {
	email: string;
	password: string;
	ip: string | null;
	userAgent: string | null;
}

export async function signInWithPassword(
	db: Kysely<Database>,
	input: SignInInput,
	verify: (password: string, stored: string | null) => Promise<boolean> = verifyPassword
): Promise<SignInOutcome> {
	const email = input.email.trim().toLowerCase();
	const account = accountKey(email);
	const address = input.ip ? ipKey(input.ip) : null;
	const reservation = await reserveAttempt(db, address ? [account, address] : [account]);
	if (!reservation.ok) return { ok: false, reason: 'throttled', retryAfter: reservation.retryAfter };

	const user = await db
		.selectFrom('users')
		.select(['id', 'password_hash', 'active'])
		.where(sql<string>`lower(email)`, '=', email)
		.executeTakeFirst();
	const passwordOk = await verify(input.password, user?.password_hash ?? null);

	if (!user || !passwordOk) {
		await recordAudit(db, {
			action: 'sign-in-failed',
			actor: null,
			subjectUserId: user?.id ?? null,
			ip: input.ip,
			detail: { email: email.slice(0, 200), reason: user ? 'wrong password' : 'unknown e-mail' }
		});
		return { ok: false, reason: 'invalid' };
	}
	if (!user.active) {
		await recordAudit(db, {
			action: 'sign-in-failed',
			actor: null,
			subjectUserId: user.id,
			ip: input.ip,
			detail: { email, reason: 'deactivated' }
		});
		return { ok: false, reason: 'deactivated' };
	}

	await releaseAttempt(db, account, address);
	// Housekeeping rides on successful sign-ins: cheap, and often enough.
	await deleteExpiredSessions(db);
	await pruneThrottle(db);
	const session = await db.transaction().execute(async (trx) => {
		const s = await createSession(trx, user.id, { ip: input.ip, userAgent: input.userAgent });
		await trx
			.updateTable('users')
			.set({ last_sign_in_at: sql<Date>`now()` })
			.where('id', '=', user.id)
			.execute();
		await recordAudit(trx, {
			action: 'sign-in',
			actor: null,
			actorUserId: user.id,
			subjectUserId: user.id,
			ip: input.ip,
			detail: { session: s.id }
		});
		return s;
	});
	return { ok: true, userId: user.id, session };
}
