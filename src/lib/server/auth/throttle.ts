// Sign-in throttling in PostgreSQL (rules in $lib/domain/sign-in-throttle). An attempt is counted
// *before* the password is checked, under a row lock, so a burst of parallel guesses cannot slip
// past the limit while the first ones are still being hashed; a successful attempt is taken back.
import type { Kysely } from 'kysely';
import { ACCOUNT_POLICY, failuresAfterAnother, IP_POLICY, retryAfterSeconds, type ThrottlePolicy } from '$lib/domain/sign-in-throttle';
import type { Database } from '../db/schema';

export const accountKey = (email: string) => `account:${email.trim().toLowerCase()}`;
export const ipKey = (ip: string) => `ip:${ip}`;

function policyOf(key: string): ThrottlePolicy {
	return key.startsWith('ip:') ? IP_POLICY : ACCOUNT_POLICY;
}

export type Reservation = { ok: true } | { ok: false; retryAfter: number };

/** Counts one attempt for every key, or refuses (counting nothing) when any key must still wait. */
export async function reserveAttempt(db: Kysely<Database>, keys: string[]): Promise<Reservation> {
	const sorted = [...new Set(keys)].sort(); // one lock order for every caller: no deadlocks
	return db.transaction().execute(async (trx) => {
		await trx
			.insertInto('sign_in_throttle')
			.values(sorted.map((key) => ({ key, failures: 0, last_failure_at: new Date(0) })))
			.onConflict((oc) => oc.column('key').doNothing())
			.execute();
		const rows = await trx
			.selectFrom('sign_in_throttle')
			.select(['key', 'failures', 'last_failure_at'])
			.where('key', 'in', sorted)
			.orderBy('key')
			.forUpdate()
			.execute();
		const now = new Date();
		let wait = 0;
		for (const r of rows) {
			wait = Math.max(wait, retryAfterSeconds({ failures: r.failures, lastFailureAt: r.last_failure_at }, now, policyOf(r.key)));
		}
		if (wait > 0) return { ok: false, retryAfter: wait };
		for (const r of rows) {
			const failures = failuresAfterAnother({ failures: r.failures, lastFailureAt: r.last_failure_at }, now, policyOf(r.key));
			await trx.updateTable('sign_in_throttle').set({ failures, last_failure_at: now }).where('key', '=', r.key).execute();
		}
		return { ok: true };
	});
}

/** After a successful sign-in: the account starts afresh; the address gets its attempt back. */
export async function releaseAttempt(db: Kysely<Database>, account: string, ip: string | null): Promise<void> {
	await db.deleteFrom('sign_in_throttle').where('key', '=', account).execute();
	if (ip) {
		await db
			.updateTable('sign_in_throttle')
			.set((eb) => ({ failures: eb('failures', '-', 1) }))
			.where('key', '=', ip)
			.where('failures', '>', 0)
			.execute();
	}
}

/** Forget an account's failures (after its password was reset through the e-mail link). */
export async function clearAccountThrottle(db: Kysely<Database>, email: string): Promise<void> {
	await db.deleteFrom('sign_in_throttle').where('key', '=', accountKey(email)).execute();
}

/** Drops keys whose last failure is long past every policy's quiet window (sprayed e-mails pile up otherwise). */
export async function pruneThrottle(db: Kysely<Database>): Promise<void> {
	const longest = Math.max(ACCOUNT_POLICY.windowSeconds, IP_POLICY.windowSeconds);
	await db
		.deleteFrom('sign_in_throttle')
		.where('last_failure_at', '<', new Date(Date.now() - 24 * longest * 1000))
		.execute();
}
