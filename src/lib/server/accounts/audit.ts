// The audit log: who did what to which account, and from where. Written in the same transaction as
// the change it records; read by admins on /admin/audit.
import type { Kysely, Transaction } from 'kysely';
import type { AuditAction } from '$lib/domain/audit-actions';
import type { Database } from '../db/schema';
import { actorOf, type Principal } from '../auth/principal';

type Db = Kysely<Database> | Transaction<Database>;

export interface AuditInput {
	action: AuditAction;
	/** Who acted: a principal, or null for an anonymous request (a failed sign-in, a reset request). */
	actor: Principal | null;
	/** When the person is known but holds no principal yet (signing in, accepting an invitation). */
	actorUserId?: number;
	/** The account the action is about, when there is one. */
	subjectUserId?: number | null;
	ip?: string | null;
	detail?: Record<string, unknown>;
}

export async function recordAudit(db: Db, e: AuditInput): Promise<void> {
	await db
		.insertInto('audit_log')
		.values({
			action: e.action,
			actor: e.actor ? actorOf(e.actor) : e.actorUserId ? `user:${e.actorUserId}` : 'anonymous',
			actor_user_id: e.actor?.userId ?? e.actorUserId ?? null,
			subject_user_id: e.subjectUserId ?? null,
			ip: e.ip ?? null,
			detail: JSON.stringify(e.detail ?? {})
		})
		.execute();
}

export interface AuditRow {
	id: string;
	at: Date;
	action: string;
	actor: string;
	actorName: string | null;
	actorEmail: string | null;
	subjectName: string | null;
	subjectEmail: string | null;
	ip: string | null;
	detail: Record<string, unknown>;
}

/** Newest first; `before` is the id of the last row of the previous page. One extra row tells if there is more. */
export async function listAudit(
	db: Db,
	opts: { userId?: number; action?: string; before?: string; limit: number }
): Promise<{ rows: AuditRow[]; nextBefore: string | null }> {
	let q = db
		.selectFrom('audit_log as a')
		.leftJoin('users as actor', 'actor.id', 'a.actor_user_id')
		.leftJoin('users as subject', 'subject.id', 'a.subject_user_id')
		.select([
			'a.id',
			'a.at',
			'a.action',
			'a.actor',
			'a.ip',
			'a.detail',
			'actor.name as actorName',
			'actor.email as actorEmail',
			'subject.name as subjectName',
			'subject.email as subjectEmail'
		]);
	if (opts.userId !== undefined) {
		const id = opts.userId;
		q = q.where((eb) => eb.or([eb('a.actor_user_id', '=', id), eb('a.subject_user_id', '=', id)]));
	}
	if (opts.action) q = q.where('a.action', '=', opts.action);
	if (opts.before) q = q.where('a.id', '<', opts.before);
	const rows = await q
		.orderBy('a.id', 'desc')
		.limit(opts.limit + 1)
		.execute();
	const more = rows.length > opts.limit;
	const page = more ? rows.slice(0, opts.limit) : rows;
	return { rows: page, nextBefore: more ? page[page.length - 1].id : null };
}
