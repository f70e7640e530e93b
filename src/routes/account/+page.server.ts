import { error, fail, redirect } from '@sveltejs/kit';
import { ROLE_SCOPES } from '$lib/domain/scopes';
import { changePasswordSchema, tokenFormSchema } from '$lib/schema/accounts';
import { createOwnToken, listApiTokens, revokeApiToken } from '$lib/server/accounts/api-tokens';
import { recordAudit } from '$lib/server/accounts/audit';
import { changePassword, getUser } from '$lib/server/accounts/users';
import { getDb } from '$lib/server/db';
import { clearSessionCookie, endAllSessions, endSession, listSessions } from '$lib/server/auth/sessions';
import { clientOf } from '$lib/server/http/client';
import { fieldErrors, formValues } from '$lib/server/http/forms';
import type { Principal } from '$lib/server/auth/principal';
import type { Actions, PageServerLoad } from './$types';

function person(p: Principal | null): Principal & { userId: number } {
	if (!p || p.userId === null) error(403, 'OAuth clients have no account page.');
	return p as Principal & { userId: number };
}

export const load = (async ({ locals }) => {
	const p = person(locals.principal);
	const db = getDb();
	const [user, sessions, tokens] = await Promise.all([
		getUser(db, p.userId),
		listSessions(db, p.userId),
		listApiTokens(db, { userId: p.userId, limit: 200 })
	]);
	if (!user) error(404, 'Account not found');
	const releaseMail =
		p.role === 'researcher'
			? !(await db.selectFrom('users').select('release_mail_opt_out').where('id', '=', p.userId).executeTakeFirstOrThrow())
					.release_mail_opt_out
			: null;
	return {
		releaseMail,
		account: user,
		currentSessionId: p.kind === 'session' ? p.credentialId : null,
		sessions,
		tokens: tokens.rows,
		grantableScopes: p.scopes.filter((s) => ROLE_SCOPES[p.role].includes(s))
	};
}) satisfies PageServerLoad;

export const actions = {
	changePassword: async (event) => {
		const p = person(event.locals.principal);
		const form = await event.request.formData();
		const parsed = changePasswordSchema.safeParse(formValues(form));
		if (!parsed.success) return fail(400, { action: 'changePassword', errors: fieldErrors(parsed.error) });
		const r = await changePassword(getDb(), p, parsed.data.current, parsed.data.password, clientOf(event).ip);
		if (!r.ok) return fail(400, { action: 'changePassword', errors: { [r.field]: r.message } });
		return {
			action: 'changePassword',
			message: r.sessionsEnded > 0 ? `Password changed. ${r.sessionsEnded} other session(s) were signed out.` : 'Password changed.'
		};
	},

	endSession: async (event) => {
		const p = person(event.locals.principal);
		const id = String((await event.request.formData()).get('id') ?? '');
		if (!/^\d+$/.test(id)) return fail(400, { action: 'endSession', message: 'No such session.' });
		const db = getDb();
		if (!(await endSession(db, id, p.userId))) return fail(404, { action: 'endSession', message: 'That session had already ended.' });
		await recordAudit(db, {
			action: 'session-revoked',
			actor: p,
			subjectUserId: p.userId,
			ip: clientOf(event).ip,
			detail: { session: id }
		});
		if (p.kind === 'session' && p.credentialId === id) {
			clearSessionCookie(event.cookies);
			redirect(303, '/sign-in?notice=signed-out');
		}
		return { action: 'endSession', message: 'Session ended.' };
	},

	signOutEverywhere: async (event) => {
		const p = person(event.locals.principal);
		const db = getDb();
		const n = await endAllSessions(db, p.userId);
		await recordAudit(db, {
			action: 'sign-out-everywhere',
			actor: p,
			subjectUserId: p.userId,
			ip: clientOf(event).ip,
			detail: { sessions_ended: n }
		});
		clearSessionCookie(event.cookies);
		redirect(303, '/sign-in?notice=signed-out-everywhere');
	},

	createToken: async (event) => {
		const p = person(event.locals.principal);
		const form = await event.request.formData();
		const values = formValues(form, ['scopes']);
		const parsed = tokenFormSchema.safeParse(values);
		if (!parsed.success) return fail(400, { action: 'createToken', errors: fieldErrors(parsed.error), values });
		const days = parsed.data.expires_in_days;
		const r = await createOwnToken(
			getDb(),
			p,
			{ name: parsed.data.name, scopes: parsed.data.scopes, expiresAt: days ? new Date(Date.now() + days * 86_400_000) : null },
			clientOf(event).ip
		);
		if (!r.ok)
			return fail(400, { action: 'createToken', errors: { [r.field === 'expires_at' ? 'expires_in_days' : r.field]: r.message }, values });
		return { action: 'createToken', created: { name: r.row.name, token: r.token, scopes: r.row.scopes, expiresAt: r.row.expiresAt } };
	},

	/** Research dataset: the researcher's choice to get (or not) an e-mail when a release is published. */
	releaseMail: async (event) => {
		const p = person(event.locals.principal);
		if (p.role !== 'researcher') return fail(400, { action: 'releaseMail', message: 'Only researchers get release e-mails.' });
		const wanted = (await event.request.formData()).get('release_mail') === 'on';
		await getDb().updateTable('users').set({ release_mail_opt_out: !wanted }).where('id', '=', p.userId).execute();
		return {
			action: 'releaseMail',
			message: wanted ? 'You will get an e-mail when a release is published.' : 'You will no longer get release e-mails.'
		};
	},

	revokeToken: async (event) => {
		const p = person(event.locals.principal);
		const id = Number((await event.request.formData()).get('id'));
		if (!Number.isInteger(id)) return fail(400, { action: 'revokeToken', message: 'No such token.' });
		const ok = await revokeApiToken(getDb(), id, { ownerId: p.userId, actor: p, ip: clientOf(event).ip });
		if (!ok) return fail(404, { action: 'revokeToken', message: 'That token is not yours or was already revoked.' });
		return { action: 'revokeToken', message: 'Token revoked. Scripts using it now get 401.' };
	}
} satisfies Actions;
